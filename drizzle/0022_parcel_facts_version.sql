-- A parcel's facts_version moves with every change to the facts all foragers share: the parcel's own
-- columns, its terms, closures, hazards, allowances, their limits and their species. The check-in
-- keeps those facts by parcel and version (src/db/field.queries.ts, loadMeasuredParcelsNear) and reads
-- them again only when the version it is handed is not the one it kept. The triggers run in the
-- transaction of the change, so a version and the facts it stands for are always seen together.
ALTER TABLE "parcels" ADD COLUMN "facts_version" bigint DEFAULT 1 NOT NULL;--> statement-breakpoint
CREATE FUNCTION raise_parcel_facts_version() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  NEW.facts_version := OLD.facts_version + 1;
  RETURN NEW;
END $$;--> statement-breakpoint
CREATE TRIGGER parcels_facts_version BEFORE UPDATE ON parcels FOR EACH ROW EXECUTE FUNCTION raise_parcel_facts_version();--> statement-breakpoint
-- Rows with a parcel_id (terms, closures, hazards, allowances): the parcels of the rows a statement
-- inserted, updated (before and after) or deleted.
CREATE FUNCTION raise_facts_version_of_parcel_rows() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'UPDATE' THEN
    UPDATE parcels SET facts_version = facts_version + 1
    WHERE id IN (SELECT parcel_id FROM changed_rows UNION SELECT parcel_id FROM earlier_rows);
  ELSE
    UPDATE parcels SET facts_version = facts_version + 1 WHERE id IN (SELECT parcel_id FROM changed_rows);
  END IF;
  RETURN NULL;
END $$;--> statement-breakpoint
-- Limits: the parcels of their allowances.
CREATE FUNCTION raise_facts_version_of_limit_rows() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'UPDATE' THEN
    UPDATE parcels SET facts_version = facts_version + 1
    WHERE id IN (SELECT a.parcel_id FROM allowances a WHERE a.id IN (SELECT allowance_id FROM changed_rows UNION SELECT allowance_id FROM earlier_rows));
  ELSE
    UPDATE parcels SET facts_version = facts_version + 1
    WHERE id IN (SELECT a.parcel_id FROM allowances a WHERE a.id IN (SELECT allowance_id FROM changed_rows));
  END IF;
  RETURN NULL;
END $$;--> statement-breakpoint
-- Species (names, cautions, look-alikes): every parcel with an allowance of a changed species.
CREATE FUNCTION raise_facts_version_of_species_rows() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  UPDATE parcels SET facts_version = facts_version + 1
  WHERE id IN (SELECT a.parcel_id FROM allowances a WHERE a.species_id IN (SELECT id FROM changed_rows));
  RETURN NULL;
END $$;--> statement-breakpoint
-- Each table gets a trigger per kind of change, each statement passing the rows it touched.
DO $$
DECLARE
  target record;
BEGIN
  FOR target IN SELECT * FROM (VALUES
    ('terms', 'raise_facts_version_of_parcel_rows'), ('closures', 'raise_facts_version_of_parcel_rows'),
    ('hazards', 'raise_facts_version_of_parcel_rows'), ('allowances', 'raise_facts_version_of_parcel_rows'),
    ('limits', 'raise_facts_version_of_limit_rows')) AS t(name, fn)
  LOOP
    EXECUTE format('CREATE TRIGGER %I AFTER INSERT ON %I REFERENCING NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION %I()', target.name || '_facts_inserted', target.name, target.fn);
    EXECUTE format('CREATE TRIGGER %I AFTER UPDATE ON %I REFERENCING OLD TABLE AS earlier_rows NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION %I()', target.name || '_facts_updated', target.name, target.fn);
    EXECUTE format('CREATE TRIGGER %I AFTER DELETE ON %I REFERENCING OLD TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION %I()', target.name || '_facts_deleted', target.name, target.fn);
  END LOOP;
END $$;--> statement-breakpoint
CREATE TRIGGER species_facts_updated AFTER UPDATE ON species REFERENCING NEW TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION raise_facts_version_of_species_rows();
