-- No entry may be recorded while the totals are first summed: they would be missed.
LOCK TABLE harvest_entries IN SHARE MODE;
--> statement-breakpoint
-- The entries recorded before the totals existed, summed in one pass by the same rules.
INSERT INTO harvested_parcels (parcel_id) SELECT DISTINCT parcel_id FROM harvest_entries;
--> statement-breakpoint
INSERT INTO harvest_totals (parcel_id, species_id, dimension, forager_id, permit_id, local_date, visit_id, total, day_total, visit_total, entries, breaches)
WITH counted AS (
  SELECT e.parcel_id, e.species_id, e.dimension, e.forager_id, coalesce(o.permit_id, e.permit_id) AS permit_id,
    coalesce(o.local_date, e.local_date) AS local_date, coalesce(o.visit_id, e.visit_id) AS visit_id, e.base_quantity, e.breach
  FROM harvest_entries e LEFT JOIN harvest_entries o ON o.id = e.corrects_entry_id),
cells AS (
  SELECT parcel_id, species_id, dimension, forager_id, permit_id, local_date, visit_id, sum(base_quantity) AS total,
    count(*) FILTER (WHERE base_quantity > 0)::int AS entries, count(*) FILTER (WHERE breach)::int AS breaches
  FROM counted GROUP BY 1, 2, 3, 4, 5, 6, 7)
SELECT parcel_id, species_id, dimension, forager_id, permit_id, local_date, visit_id, total,
  sum(total) OVER (PARTITION BY parcel_id, species_id, dimension, forager_id, permit_id, local_date),
  CASE WHEN visit_id IS NOT NULL THEN sum(total) OVER (PARTITION BY visit_id, species_id, dimension, permit_id) END,
  entries, breaches
FROM cells;
--> statement-breakpoint
-- The key of harvest_totals (see src/db/schema/field.ts), built after the first sums so that it is
-- packed. NULLS NOT DISTINCT: entries without a permit or a visit share a row. The sums are
-- included so that the audit reads them from the index alone. It leads with parcel, species and
-- day, the order in which the audit reads a season.
CREATE UNIQUE INDEX "harvest_totals_key" ON "harvest_totals" USING btree
  ("parcel_id", "species_id", "local_date", "forager_id", "permit_id", "dimension", "visit_id")
  INCLUDE ("total", "day_total", "visit_total", "entries", "breaches") NULLS NOT DISTINCT;
--> statement-breakpoint
-- Each new entry is added where the limits count it: a correction on its entry's day, visit and
-- permit (one step back, as the field's tallies count it). Every write to one parcel and species
-- takes the same transaction lock first, so the day's and the visit's totals carried on each row
-- add up one entry after another: at READ COMMITTED, the app's level, where each statement after
-- the lock sees what the previous holder committed.
CREATE FUNCTION add_to_harvest_totals() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  counted_permit uuid := NEW.permit_id;
  counted_date date := NEW.local_date;
  counted_visit uuid := NEW.visit_id;
  day_so_far numeric;
  visit_so_far numeric;
BEGIN
  IF NEW.corrects_entry_id IS NOT NULL THEN
    SELECT coalesce(o.permit_id, NEW.permit_id), o.local_date, coalesce(o.visit_id, NEW.visit_id)
      INTO counted_permit, counted_date, counted_visit
      FROM harvest_entries o WHERE o.id = NEW.corrects_entry_id;
  END IF;
  PERFORM pg_advisory_xact_lock(hashtextextended(NEW.parcel_id::text || NEW.species_id::text, 0));
  INSERT INTO harvested_parcels (parcel_id) VALUES (NEW.parcel_id) ON CONFLICT DO NOTHING;
  SELECT t.day_total INTO day_so_far FROM harvest_totals t
    WHERE t.parcel_id = NEW.parcel_id AND t.species_id = NEW.species_id AND t.local_date = counted_date
      AND t.forager_id = NEW.forager_id AND t.permit_id IS NOT DISTINCT FROM counted_permit AND t.dimension = NEW.dimension
    LIMIT 1;
  IF counted_visit IS NOT NULL THEN
    SELECT t.visit_total INTO visit_so_far FROM harvest_totals t
      WHERE t.visit_id = counted_visit AND t.species_id = NEW.species_id AND t.dimension = NEW.dimension
        AND t.permit_id IS NOT DISTINCT FROM counted_permit
      LIMIT 1;
  END IF;
  -- The row's own day and visit totals are set as it is written; the day's other rows (other
  -- visits) and the visit's other rows (other days) are few and most often none.
  INSERT INTO harvest_totals AS t (parcel_id, species_id, dimension, forager_id, permit_id, local_date, visit_id,
      total, day_total, visit_total, entries, breaches)
    VALUES (NEW.parcel_id, NEW.species_id, NEW.dimension, NEW.forager_id, counted_permit, counted_date, counted_visit,
      NEW.base_quantity, coalesce(day_so_far, 0) + NEW.base_quantity,
      CASE WHEN counted_visit IS NOT NULL THEN coalesce(visit_so_far, 0) + NEW.base_quantity END,
      (NEW.base_quantity > 0)::int, NEW.breach::int)
    ON CONFLICT (parcel_id, species_id, local_date, forager_id, permit_id, dimension, visit_id) DO UPDATE
      SET total = t.total + excluded.total, day_total = t.day_total + excluded.total, visit_total = t.visit_total + excluded.total,
        entries = t.entries + excluded.entries, breaches = t.breaches + excluded.breaches;
  UPDATE harvest_totals t SET day_total = t.day_total + NEW.base_quantity
    WHERE t.parcel_id = NEW.parcel_id AND t.species_id = NEW.species_id AND t.local_date = counted_date
      AND t.forager_id = NEW.forager_id AND t.permit_id IS NOT DISTINCT FROM counted_permit AND t.dimension = NEW.dimension
      AND t.visit_id IS DISTINCT FROM counted_visit;
  IF counted_visit IS NOT NULL THEN
    UPDATE harvest_totals t SET visit_total = t.visit_total + NEW.base_quantity
      WHERE t.visit_id = counted_visit AND t.species_id = NEW.species_id AND t.dimension = NEW.dimension
        AND t.permit_id IS NOT DISTINCT FROM counted_permit AND t.local_date <> counted_date;
  END IF;
  RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER harvest_entries_add_to_totals AFTER INSERT ON harvest_entries
  FOR EACH ROW EXECUTE FUNCTION add_to_harvest_totals();
