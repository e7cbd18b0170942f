-- Two roles. The role that runs the migrations owns the tables; the app signs in as a role that owns
-- nothing and holds only the grants of tallywood_app below: it may not alter a table, drop or disable
-- a trigger, truncate, or change a record. A role belongs to the cluster, not the database: one made
-- already (by an administrator, or by the migrations of another database here) is kept, so an owner
-- without CREATEROLE can run this once the role exists.
DO $$
BEGIN
  IF NOT EXISTS (SELECT FROM pg_roles WHERE rolname = 'tallywood_app') THEN
    CREATE ROLE tallywood_app NOLOGIN;
  END IF;
EXCEPTION WHEN duplicate_object OR unique_violation THEN
  NULL; -- made at the same moment by the migrations of another database of the cluster
END $$;
--> statement-breakpoint
GRANT USAGE ON SCHEMA public TO tallywood_app;
--> statement-breakpoint
GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO tallywood_app;
--> statement-breakpoint
-- The records are read and appended to, never changed (0002, 0007, 0010).
REVOKE UPDATE, DELETE ON harvest_entries, harvest_quantities, permit_events, audit_events, flags, flag_notes FROM tallywood_app;
--> statement-breakpoint
-- The kept totals are read; only their trigger writes them (below).
REVOKE INSERT, UPDATE, DELETE ON harvest_totals, harvested_parcels FROM tallywood_app;
--> statement-breakpoint
-- PostGIS's own catalogue is read only.
REVOKE INSERT, UPDATE, DELETE ON spatial_ref_sys, geometry_columns, geography_columns FROM tallywood_app;
--> statement-breakpoint
GRANT USAGE ON ALL SEQUENCES IN SCHEMA public TO tallywood_app;
--> statement-breakpoint
-- GET /api/health counts the applied migrations.
GRANT USAGE ON SCHEMA drizzle TO tallywood_app;
--> statement-breakpoint
GRANT SELECT ON drizzle.__drizzle_migrations TO tallywood_app;
--> statement-breakpoint
-- Tables and sequences the later migrations make (as the role running this one) get the ordinary
-- grants. A later append-only table, or one kept by a trigger, must REVOKE what the app may not do
-- there, as above, and get the guards below.
ALTER DEFAULT PRIVILEGES IN SCHEMA public GRANT SELECT, INSERT, UPDATE, DELETE ON TABLES TO tallywood_app;
--> statement-breakpoint
ALTER DEFAULT PRIVILEGES IN SCHEMA public GRANT USAGE ON SEQUENCES TO tallywood_app;
--> statement-breakpoint
-- No temporary tables or functions either: the app makes none, and with them a role that owns
-- nothing would own something. (Only the database's owner may revoke this; anyone else gets a warning.)
DO $$
BEGIN
  EXECUTE format('REVOKE TEMPORARY ON DATABASE %I FROM PUBLIC', current_database());
END $$;
--> statement-breakpoint
-- The two record tables 0002 left without one get a TRUNCATE guard like the others.
CREATE TRIGGER permit_events_no_truncate BEFORE TRUNCATE ON permit_events
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER audit_events_no_truncate BEFORE TRUNCATE ON audit_events
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
-- The app appends to harvest_quantities; the trigger that keeps the totals (0011) writes them as its
-- owner, with a fixed search_path so that no schema of the caller's can stand in for the tables.
-- Nobody else may run it, so nobody can hang it on a table of their own and feed it made-up rows.
ALTER FUNCTION add_to_harvest_totals() SECURITY DEFINER SET search_path = public, pg_temp;
--> statement-breakpoint
REVOKE EXECUTE ON FUNCTION add_to_harvest_totals() FROM PUBLIC;
--> statement-breakpoint
-- The kept totals change only through that trigger, even for a role allowed to write them. Inside
-- this statement trigger pg_trigger_depth() is 1 for a statement a client sent and 2 or more for one
-- a trigger runs. A later migration that rebuilds the totals disables these two triggers around the
-- rebuild (ALTER TABLE … DISABLE TRIGGER, which only the owner may), as 0010 did the ledger's.
CREATE FUNCTION refuse_direct_totals_write() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'TRUNCATE' OR pg_trigger_depth() < 2 THEN
    RAISE EXCEPTION '% is kept by the trigger on harvest_quantities: a direct % refused', TG_TABLE_NAME, TG_OP
      USING ERRCODE = 'restrict_violation';
  END IF;
  RETURN NULL;
END $$;
--> statement-breakpoint
CREATE TRIGGER harvest_totals_kept_by_trigger BEFORE INSERT OR UPDATE OR DELETE OR TRUNCATE ON harvest_totals
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_direct_totals_write();
--> statement-breakpoint
CREATE TRIGGER harvested_parcels_kept_by_trigger BEFORE INSERT OR UPDATE OR DELETE OR TRUNCATE ON harvested_parcels
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_direct_totals_write();
