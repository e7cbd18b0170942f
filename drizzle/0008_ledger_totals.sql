CREATE TABLE "harvest_totals" (
	"parcel_id" uuid NOT NULL,
	"species_id" uuid NOT NULL,
	"dimension" "dimension" NOT NULL,
	"forager_id" text NOT NULL,
	"permit_id" uuid,
	"local_date" date NOT NULL,
	"visit_id" uuid,
	"total" numeric NOT NULL,
	"day_total" numeric NOT NULL,
	"visit_total" numeric,
	"entries" integer NOT NULL,
	"breaches" integer NOT NULL
);
--> statement-breakpoint
CREATE TABLE "harvested_parcels" (
	"parcel_id" uuid PRIMARY KEY NOT NULL
);
--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_species_id_species_id_fk" FOREIGN KEY ("species_id") REFERENCES "public"."species"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_forager_id_users_id_fk" FOREIGN KEY ("forager_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_visit_id_visits_id_fk" FOREIGN KEY ("visit_id") REFERENCES "public"."visits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvested_parcels" ADD CONSTRAINT "harvested_parcels_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "harvest_totals_visit" ON "harvest_totals" USING btree ("visit_id") WHERE "harvest_totals"."visit_id" is not null;--> statement-breakpoint
CREATE INDEX "check_ins_visit" ON "check_ins" USING btree ("visit_id");--> statement-breakpoint
CREATE INDEX "harvest_entries_visit" ON "harvest_entries" USING btree ("visit_id");--> statement-breakpoint
CREATE INDEX "harvest_entries_corrects" ON "harvest_entries" USING btree ("corrects_entry_id") WHERE "harvest_entries"."corrects_entry_id" is not null;