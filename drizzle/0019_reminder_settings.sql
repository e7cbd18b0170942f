CREATE TABLE "reminder_settings" (
	"user_id" text PRIMARY KEY NOT NULL,
	"permit_ending" boolean DEFAULT true NOT NULL,
	"season_opening" boolean DEFAULT true NOT NULL,
	"closure_starting" boolean DEFAULT true NOT NULL,
	"weekly_digest" boolean DEFAULT true NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "reminder_settings" ADD CONSTRAINT "reminder_settings_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- The app reads and keeps each person's switches (0013's default privileges say the same; written out
-- so the table's grants stand on their own whatever number this migration ends up with).
GRANT SELECT, INSERT, UPDATE, DELETE ON "reminder_settings" TO tallywood_app;
