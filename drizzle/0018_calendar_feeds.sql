CREATE TABLE "calendar_feeds" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"account_id" text NOT NULL,
	"token_hash" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"revoked_at" timestamp with time zone,
	CONSTRAINT "calendar_feeds_token_hash_unique" UNIQUE("token_hash")
);
--> statement-breakpoint
ALTER TABLE "calendar_feeds" ADD CONSTRAINT "calendar_feeds_account_id_users_id_fk" FOREIGN KEY ("account_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "calendar_feeds_one_live" ON "calendar_feeds" USING btree ("account_id") WHERE "calendar_feeds"."revoked_at" is null;--> statement-breakpoint
-- The app reads, makes and revokes feeds (0013 gives new tables these grants by default; named here so the table needs nothing else).
GRANT SELECT, INSERT, UPDATE, DELETE ON "calendar_feeds" TO tallywood_app;
