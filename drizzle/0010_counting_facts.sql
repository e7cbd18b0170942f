-- The counting facts are decided once, when an entry is written, and stored on it (local day, visit,
-- permit and club, season occurrence, root of a correction chain); quantities move to one row per
-- measure; the kept totals are rebuilt from these facts in 0011.
-- The old kept totals go first: their trigger would fire on the ledger while it is re-read below.
DROP TRIGGER harvest_entries_add_to_totals ON harvest_entries;--> statement-breakpoint
DROP FUNCTION add_to_harvest_totals();--> statement-breakpoint
CREATE TYPE "public"."measure" AS ENUM('mass', 'volume', 'stems', 'bulbs', 'fruiting-bodies', 'plants');--> statement-breakpoint
ALTER TYPE "public"."unit" ADD VALUE 'us-dry-pint';--> statement-breakpoint
ALTER TYPE "public"."unit" ADD VALUE 'us-dry-quart';--> statement-breakpoint
CREATE TABLE "harvest_quantities" (
	"entry_id" uuid NOT NULL,
	"measure" "measure" NOT NULL,
	"quantity" numeric(18, 6) NOT NULL,
	"unit" "unit" NOT NULL,
	"base_quantity" numeric(36, 16) NOT NULL,
	CONSTRAINT "harvest_quantities_pkey" PRIMARY KEY("entry_id","measure"),
	CONSTRAINT "harvest_quantities_not_zero" CHECK ("harvest_quantities"."quantity" <> 0)
);
--> statement-breakpoint
ALTER TABLE "harvest_totals" DISABLE ROW LEVEL SECURITY;--> statement-breakpoint
DROP TABLE "harvest_totals" CASCADE;--> statement-breakpoint
ALTER TABLE "limits" DROP CONSTRAINT "limits_one_per_scope";--> statement-breakpoint
DROP INDEX "visits_open";--> statement-breakpoint
ALTER TABLE "allowances" ADD COLUMN "removed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "allowances" ADD COLUMN "removed_by" text;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "club_id" uuid;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "counted_on" date;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "counted_visit_id" uuid;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "season_start" date;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "season_end" date;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "root_entry_id" uuid;--> statement-breakpoint
ALTER TABLE "harvest_quantities" ADD CONSTRAINT "harvest_quantities_entry_id_harvest_entries_id_fk" FOREIGN KEY ("entry_id") REFERENCES "public"."harvest_entries"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "allowances" ADD CONSTRAINT "allowances_removed_by_users_id_fk" FOREIGN KEY ("removed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_club_id_clubs_id_fk" FOREIGN KEY ("club_id") REFERENCES "public"."clubs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_counted_visit_id_visits_id_fk" FOREIGN KEY ("counted_visit_id") REFERENCES "public"."visits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_root_entry_id_harvest_entries_id_fk" FOREIGN KEY ("root_entry_id") REFERENCES "public"."harvest_entries"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "harvest_entries_root" ON "harvest_entries" USING btree ("root_entry_id") WHERE "harvest_entries"."root_entry_id" is not null;--> statement-breakpoint
-- What a unit measures, as src/lib/units.ts says: the one place SQL learns it.
CREATE FUNCTION unit_measure(u unit) RETURNS measure LANGUAGE sql IMMUTABLE PARALLEL SAFE AS $$
  SELECT CASE
    WHEN u::text IN ('g', 'kg', 'oz', 'lb') THEN 'mass'
    WHEN u::text IN ('stem') THEN 'stems'
    WHEN u::text IN ('bulb') THEN 'bulbs'
    WHEN u::text IN ('fruiting-body') THEN 'fruiting-bodies'
    WHEN u::text IN ('plant') THEN 'plants'
    ELSE 'volume'
  END::measure
$$;--> statement-breakpoint
-- One limit per allowance, permit, scope and measure ("200 g or 50 plants" is two season limits).
CREATE UNIQUE INDEX "limits_one_per_scope_and_measure" ON "limits" ("allowance_id", "permit_id", "scope", unit_measure("unit")) NULLS NOT DISTINCT;--> statement-breakpoint
-- A forager has one open visit: older ones left open end at their local midnight, or now.
UPDATE visits v SET ended_at = least(now(), ((v.local_date + 1)::timestamp AT TIME ZONE p.time_zone)),
    ended_by = CASE WHEN ((v.local_date + 1)::timestamp AT TIME ZONE p.time_zone) <= now() THEN 'end-of-day'::visit_end ELSE 'check-out'::visit_end END
  FROM parcels p
  WHERE p.id = v.parcel_id AND v.ended_at IS NULL
    AND EXISTS (SELECT 1 FROM visits later WHERE later.forager_id = v.forager_id AND later.ended_at IS NULL
      AND (later.started_at, later.id) > (v.started_at, v.id));--> statement-breakpoint
CREATE UNIQUE INDEX "visits_one_open" ON "visits" USING btree ("forager_id") WHERE "visits"."ended_at" is null;--> statement-breakpoint
-- Quantities of the entries so far, one measure each.
INSERT INTO harvest_quantities (entry_id, measure, quantity, unit, base_quantity)
  SELECT id, unit_measure(unit), quantity, unit, base_quantity FROM harvest_entries;--> statement-breakpoint
CREATE TRIGGER harvest_quantities_append_only BEFORE UPDATE OR DELETE ON harvest_quantities
  FOR EACH ROW EXECUTE FUNCTION refuse_change();--> statement-breakpoint
CREATE TRIGGER harvest_quantities_no_truncate BEFORE TRUNCATE ON harvest_quantities
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();--> statement-breakpoint
-- The season occurrence holding a date, as the field engine finds it (src/lib/field/time.ts,
-- currentSeason): the windows are first joined where they overlap or meet on the yearly calendar
-- (places 1…366 of a leap year; all of them covered is one year-long season from the first window's
-- start), then the occurrence of the joined window holding the date is taken; 29 February in a common
-- year ends a window on the 28th and starts one on 1 March. Only for the entries recorded before the
-- engine stored its answer; dropped at the end of this migration.
CREATE FUNCTION pg_temp.occurrence_day(y int, md text, which text) RETURNS date LANGUAGE sql IMMUTABLE AS $$
  SELECT CASE
    WHEN md = '02-29' AND NOT ((y % 4 = 0 AND y % 100 <> 0) OR y % 400 = 0)
      THEN CASE which WHEN 'end' THEN make_date(y, 2, 28) ELSE make_date(y, 3, 1) END
    ELSE make_date(y, split_part(md, '-', 1)::int, split_part(md, '-', 2)::int)
  END
$$;--> statement-breakpoint
CREATE FUNCTION pg_temp.season_holding(windows jsonb, d date, OUT season_start date, OUT season_end date) LANGUAGE sql STABLE AS $$
  WITH w AS (SELECT n, x ->> 'start' AS s, x ->> 'end' AS e FROM jsonb_array_elements(coalesce(windows, '[]')) WITH ORDINALITY AS t(x, n)),
  place AS (
    SELECT p, to_char(date '2028-01-01' + p - 1, 'MM-DD') AS md,
      EXISTS (SELECT 1 FROM w WHERE CASE WHEN w.s <= w.e THEN to_char(date '2028-01-01' + p - 1, 'MM-DD') BETWEEN w.s AND w.e
        ELSE to_char(date '2028-01-01' + p - 1, 'MM-DD') >= w.s OR to_char(date '2028-01-01' + p - 1, 'MM-DD') <= w.e END) AS covered
    FROM generate_series(1, 366) AS p),
  twice AS (SELECT p, covered FROM place UNION ALL SELECT p + 366, covered FROM place),
  opening AS (SELECT c.p, c.md FROM place c JOIN place b ON b.p = CASE WHEN c.p = 1 THEN 366 ELSE c.p - 1 END WHERE c.covered AND NOT b.covered),
  joined AS (
    SELECT o.md AS s, (SELECT x.md FROM place x WHERE x.p = ((SELECT min(t.p) FROM twice t WHERE t.p > o.p AND NOT t.covered) - 2) % 366 + 1) AS e FROM opening o
    UNION ALL
    -- The whole year covered: one season a year long, from the first window's start.
    SELECT w.s, (SELECT x.md FROM place x WHERE x.p = (SELECT (y.p + 364) % 366 + 1 FROM place y WHERE y.md = w.s))
    FROM w WHERE w.n = 1 AND NOT EXISTS (SELECT 1 FROM opening) AND (SELECT bool_and(covered) FROM place)),
  occurrence AS (
    SELECT pg_temp.occurrence_day(y, j.s, 'start') AS s, pg_temp.occurrence_day(CASE WHEN j.s <= j.e THEN y ELSE y + 1 END, j.e, 'end') AS e
    FROM joined j CROSS JOIN generate_series(extract(year FROM d)::int - 2, extract(year FROM d)::int + 1) AS y)
  SELECT s, e FROM occurrence WHERE s <= e AND d BETWEEN s AND e
$$;--> statement-breakpoint
ALTER TABLE harvest_entries DISABLE TRIGGER harvest_entries_append_only;--> statement-breakpoint
-- A correction counts where the root of its chain counted: its day, visit, permit and season.
WITH RECURSIVE chain AS (
  SELECT id, id AS root_id FROM harvest_entries WHERE corrects_entry_id IS NULL
  UNION ALL
  SELECT c.id, chain.root_id FROM harvest_entries c JOIN chain ON c.corrects_entry_id = chain.id
)
UPDATE harvest_entries e SET
    root_entry_id = CASE WHEN e.corrects_entry_id IS NULL THEN NULL ELSE chain.root_id END,
    counted_on = r.local_date,
    counted_visit_id = r.visit_id,
    permit_id = coalesce(r.permit_id, e.permit_id)
  FROM chain JOIN harvest_entries r ON r.id = chain.root_id
  WHERE chain.id = e.id;--> statement-breakpoint
UPDATE harvest_entries e SET club_id = pm.holder_club_id FROM permits pm WHERE pm.id = e.permit_id;--> statement-breakpoint
-- The season each root counted in; a date no window holds (the allowance was changed or removed
-- since) counts in its calendar year.
UPDATE harvest_entries e SET season_start = coalesce(s.season_start, date_trunc('year', e.counted_on)::date),
    season_end = coalesce(s.season_end, (date_trunc('year', e.counted_on) + interval '1 year - 1 day')::date)
  FROM harvest_entries r
  LEFT JOIN allowances a ON a.parcel_id = r.parcel_id AND a.species_id = r.species_id
  CROSS JOIN LATERAL pg_temp.season_holding(a.seasons, r.counted_on) s
  WHERE r.id = coalesce(e.root_entry_id, e.id);--> statement-breakpoint
ALTER TABLE harvest_entries ENABLE TRIGGER harvest_entries_append_only;--> statement-breakpoint
ALTER TABLE "harvest_entries" ALTER COLUMN "counted_on" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "harvest_entries" ALTER COLUMN "season_start" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "harvest_entries" ALTER COLUMN "season_end" SET NOT NULL;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_root_of_correction" CHECK (("harvest_entries"."corrects_entry_id" is null) = ("harvest_entries"."root_entry_id" is null));--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_season_order" CHECK ("harvest_entries"."season_end" >= "harvest_entries"."season_start");--> statement-breakpoint
DROP FUNCTION pg_temp.season_holding(jsonb, date);--> statement-breakpoint
DROP FUNCTION pg_temp.occurrence_day(int, text, text);
