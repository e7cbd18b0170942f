-- The admin keeps the catalogue: each caution of a species is a row with its source, a species can be
-- retired (kept where it is used, offered for no new allowance), and a landowner says at sign-up which
-- land they manage, for the admin who verifies them (or declines, with a reason).
CREATE TABLE "species_cautions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"species_id" uuid NOT NULL,
	"position" integer NOT NULL,
	"text" text NOT NULL,
	"source_title" text NOT NULL,
	"source_url" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "claimed_land" text;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "sign_up_note" text;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "landowner_declined_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "users" ADD COLUMN "landowner_decline_reason" text;--> statement-breakpoint
ALTER TABLE "species" ADD COLUMN "retired_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "species" ADD COLUMN "retired_by" text;--> statement-breakpoint
ALTER TABLE "species_cautions" ADD CONSTRAINT "species_cautions_species_id_species_id_fk" FOREIGN KEY ("species_id") REFERENCES "public"."species"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "species_cautions_species" ON "species_cautions" USING btree ("species_id","position");--> statement-breakpoint
ALTER TABLE "species" ADD CONSTRAINT "species_retired_by_users_id_fk" FOREIGN KEY ("retired_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
-- The species' cautions array is what the field, the field pack and the audit read; it is kept from the
-- caution rows, in their order, so an admin's edit reaches them without any reader changing.
CREATE FUNCTION keep_species_cautions() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  UPDATE species s
  SET cautions = coalesce((SELECT array_agg(c.text ORDER BY c.position, c.id) FROM species_cautions c WHERE c.species_id = s.id), '{}'::text[])
  WHERE s.id IN (SELECT species_id FROM changed_rows);
  RETURN NULL;
END $$;--> statement-breakpoint
CREATE TRIGGER species_cautions_inserted AFTER INSERT ON species_cautions REFERENCING NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_species_cautions();--> statement-breakpoint
CREATE TRIGGER species_cautions_updated AFTER UPDATE ON species_cautions REFERENCING NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_species_cautions();--> statement-breakpoint
CREATE TRIGGER species_cautions_deleted AFTER DELETE ON species_cautions REFERENCING OLD TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_species_cautions();--> statement-breakpoint
-- The cautions written before this came from general knowledge (data/species.json says so).
INSERT INTO species_cautions (species_id, position, text, source_title)
SELECT s.id, c.ord::integer, c.text, 'Written from general knowledge; not yet checked against a regional field guide'
FROM species s, unnest(s.cautions) WITH ORDINALITY AS c(text, ord);
