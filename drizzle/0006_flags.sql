CREATE TYPE "public"."flag_kind" AS ENUM('breach', 'nearing');--> statement-breakpoint
CREATE TYPE "public"."tally_state" AS ENUM('within', 'nearing', 'reached', 'over');--> statement-breakpoint
CREATE TABLE "flag_notes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"flag_id" uuid NOT NULL,
	"author_id" text NOT NULL,
	"note" text NOT NULL,
	"handled" boolean NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "flag_notes_note" CHECK (length(btrim("flag_notes"."note")) > 0)
);
--> statement-breakpoint
CREATE TABLE "flags" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"kind" "flag_kind" NOT NULL,
	"entry_id" uuid NOT NULL,
	"parcel_id" uuid NOT NULL,
	"species_id" uuid NOT NULL,
	"forager_id" text NOT NULL,
	"permit_id" uuid,
	"scopes" "limit_scope"[] NOT NULL,
	"worst_state" "tally_state" NOT NULL,
	"tallies" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "flags_entry_id_unique" UNIQUE("entry_id")
);
--> statement-breakpoint
ALTER TABLE "flag_notes" ADD CONSTRAINT "flag_notes_flag_id_flags_id_fk" FOREIGN KEY ("flag_id") REFERENCES "public"."flags"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flag_notes" ADD CONSTRAINT "flag_notes_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_entry_id_harvest_entries_id_fk" FOREIGN KEY ("entry_id") REFERENCES "public"."harvest_entries"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_species_id_species_id_fk" FOREIGN KEY ("species_id") REFERENCES "public"."species"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_forager_id_users_id_fk" FOREIGN KEY ("forager_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "flags" ADD CONSTRAINT "flags_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "flag_notes_flag" ON "flag_notes" USING btree ("flag_id","created_at");--> statement-breakpoint
CREATE INDEX "flags_parcel" ON "flags" USING btree ("parcel_id","created_at");--> statement-breakpoint
CREATE INDEX "flags_permit" ON "flags" USING btree ("permit_id","created_at");