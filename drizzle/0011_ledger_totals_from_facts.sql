CREATE TABLE "harvest_totals" (
	"parcel_id" uuid NOT NULL,
	"species_id" uuid NOT NULL,
	"measure" "measure" NOT NULL,
	"season_start" date NOT NULL,
	"season_end" date NOT NULL,
	"forager_id" text NOT NULL,
	"counted_on" date NOT NULL,
	"visit_id" uuid,
	"permit_id" uuid,
	"club_id" uuid,
	"total" numeric NOT NULL,
	"day_total" numeric NOT NULL,
	"permit_day_total" numeric NOT NULL,
	"visit_total" numeric,
	"entries" integer NOT NULL,
	"breaches" integer NOT NULL
);
--> statement-breakpoint
ALTER TABLE "harvest_entries" DROP CONSTRAINT "harvest_entries_positive_unless_correction";--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_species_id_species_id_fk" FOREIGN KEY ("species_id") REFERENCES "public"."species"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_forager_id_users_id_fk" FOREIGN KEY ("forager_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_visit_id_visits_id_fk" FOREIGN KEY ("visit_id") REFERENCES "public"."visits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_totals" ADD CONSTRAINT "harvest_totals_club_id_clubs_id_fk" FOREIGN KEY ("club_id") REFERENCES "public"."clubs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "harvest_totals_forager" ON "harvest_totals" USING btree ("forager_id","parcel_id","species_id","measure","counted_on");--> statement-breakpoint
CREATE INDEX "harvest_totals_visit" ON "harvest_totals" USING btree ("visit_id") WHERE "harvest_totals"."visit_id" is not null;--> statement-breakpoint
ALTER TABLE "harvest_entries" DROP COLUMN "quantity";--> statement-breakpoint
ALTER TABLE "harvest_entries" DROP COLUMN "unit";--> statement-breakpoint
ALTER TABLE "harvest_entries" DROP COLUMN "dimension";--> statement-breakpoint
ALTER TABLE "harvest_entries" DROP COLUMN "base_quantity";--> statement-breakpoint
ALTER TABLE "harvest_quantities" ADD CONSTRAINT "harvest_quantities_unit_measure" CHECK (unit_measure("harvest_quantities"."unit") = "harvest_quantities"."measure");--> statement-breakpoint
DROP TYPE "public"."dimension";--> statement-breakpoint
-- The kept totals, summed in one pass from the facts stored on each entry (0010).
INSERT INTO harvest_totals (parcel_id, species_id, measure, season_start, season_end, forager_id, counted_on, visit_id, permit_id, club_id,
    total, day_total, permit_day_total, visit_total, entries, breaches)
WITH counted AS (
  SELECT e.parcel_id, e.species_id, q.measure, e.season_start, e.season_end, e.forager_id, e.counted_on, e.counted_visit_id AS visit_id,
    e.permit_id, e.club_id, q.base_quantity, e.breach, e.corrects_entry_id IS NULL AS original
  FROM harvest_quantities q JOIN harvest_entries e ON e.id = q.entry_id),
cells AS (
  SELECT parcel_id, species_id, measure, season_start, season_end, forager_id, counted_on, visit_id, permit_id, club_id,
    sum(base_quantity) AS total, count(*) FILTER (WHERE original)::int AS entries, count(*) FILTER (WHERE breach)::int AS breaches
  FROM counted GROUP BY 1, 2, 3, 4, 5, 6, 7, 8, 9, 10)
SELECT parcel_id, species_id, measure, season_start, season_end, forager_id, counted_on, visit_id, permit_id, club_id, total,
  sum(total) OVER (PARTITION BY parcel_id, species_id, measure, forager_id, counted_on),
  sum(total) OVER (PARTITION BY parcel_id, species_id, measure, forager_id, counted_on, permit_id),
  CASE WHEN visit_id IS NOT NULL THEN sum(total) OVER (PARTITION BY visit_id, species_id, measure) END,
  entries, breaches
FROM cells;
--> statement-breakpoint
-- The key of harvest_totals (src/db/schema/field.ts), built after the first sums so that it is
-- packed. NULLS NOT DISTINCT: entries without a visit or a permit share a row. The sums are
-- included so that an audit reads them from the index alone. It leads with what an audit and a
-- check-in look up: parcel, species, measure and season.
CREATE UNIQUE INDEX "harvest_totals_key" ON "harvest_totals" USING btree
  ("parcel_id", "species_id", "measure", "season_start", "season_end", "forager_id", "counted_on", "visit_id", "permit_id", "club_id")
  INCLUDE ("total", "day_total", "permit_day_total", "visit_total", "entries", "breaches") NULLS NOT DISTINCT;
--> statement-breakpoint
-- Each new quantity is added where its entry's stored facts say it counts. Every write to one
-- parcel and species takes the same transaction lock first, so the day's and the visit's totals
-- carried on the rows are summed one write after another (at READ COMMITTED, the app's level, each
-- statement after the lock sees what the previous holder committed). The new totals are summed
-- before the row is written, so the usual entry (the only row of its day and visit) costs one
-- write; the day's or visit's other rows, when there are any, are brought up to date after it.
-- Only a correction may take away.
CREATE FUNCTION add_to_harvest_totals() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  e harvest_entries%ROWTYPE;
  day_now numeric;
  permit_day_now numeric;
  visit_now numeric;
BEGIN
  SELECT * INTO STRICT e FROM harvest_entries WHERE id = NEW.entry_id;
  IF NEW.quantity <= 0 AND e.corrects_entry_id IS NULL THEN
    RAISE EXCEPTION 'only a correction may take away (entry %, quantity %)', e.id, NEW.quantity USING ERRCODE = 'check_violation';
  END IF;
  PERFORM pg_advisory_xact_lock(hashtextextended('harvest_totals:' || e.parcel_id::text || ':' || e.species_id::text, 0));
  INSERT INTO harvested_parcels (parcel_id) VALUES (e.parcel_id) ON CONFLICT DO NOTHING;
  SELECT coalesce(sum(t.total), 0) + NEW.base_quantity,
      coalesce(sum(t.total) FILTER (WHERE t.permit_id IS NOT DISTINCT FROM e.permit_id), 0) + NEW.base_quantity
    INTO day_now, permit_day_now
    FROM harvest_totals t
    WHERE t.forager_id = e.forager_id AND t.parcel_id = e.parcel_id AND t.species_id = e.species_id AND t.measure = NEW.measure AND t.counted_on = e.counted_on;
  IF e.counted_visit_id IS NOT NULL THEN
    SELECT coalesce(sum(t.total), 0) + NEW.base_quantity INTO visit_now
      FROM harvest_totals t WHERE t.visit_id = e.counted_visit_id AND t.species_id = e.species_id AND t.measure = NEW.measure;
  END IF;
  INSERT INTO harvest_totals AS t (parcel_id, species_id, measure, season_start, season_end, forager_id, counted_on, visit_id, permit_id, club_id,
      total, day_total, permit_day_total, visit_total, entries, breaches)
    VALUES (e.parcel_id, e.species_id, NEW.measure, e.season_start, e.season_end, e.forager_id, e.counted_on, e.counted_visit_id, e.permit_id, e.club_id,
      NEW.base_quantity, day_now, permit_day_now, visit_now, (e.corrects_entry_id IS NULL)::int, e.breach::int)
    ON CONFLICT (parcel_id, species_id, measure, season_start, season_end, forager_id, counted_on, visit_id, permit_id, club_id) DO UPDATE
      SET total = t.total + excluded.total, day_total = excluded.day_total, permit_day_total = excluded.permit_day_total,
        visit_total = excluded.visit_total, entries = t.entries + excluded.entries, breaches = t.breaches + excluded.breaches;
  -- The day's other rows (other visits, permits or seasons) and the visit's other rows, if any.
  UPDATE harvest_totals t SET day_total = day_now,
      permit_day_total = CASE WHEN t.permit_id IS NOT DISTINCT FROM e.permit_id THEN permit_day_now ELSE t.permit_day_total END
    WHERE t.forager_id = e.forager_id AND t.parcel_id = e.parcel_id AND t.species_id = e.species_id AND t.measure = NEW.measure AND t.counted_on = e.counted_on
      AND t.day_total IS DISTINCT FROM day_now;
  IF e.counted_visit_id IS NOT NULL THEN
    UPDATE harvest_totals t SET visit_total = visit_now
      WHERE t.visit_id = e.counted_visit_id AND t.species_id = e.species_id AND t.measure = NEW.measure AND t.visit_total IS DISTINCT FROM visit_now;
  END IF;
  RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER harvest_quantities_add_to_totals AFTER INSERT ON harvest_quantities
  FOR EACH ROW EXECUTE FUNCTION add_to_harvest_totals();
