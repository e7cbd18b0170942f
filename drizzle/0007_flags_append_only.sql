-- Flags and their follow-up notes are records: a trigger refuses UPDATE and DELETE (refuse_change from 0002).
CREATE TRIGGER flags_append_only BEFORE UPDATE OR DELETE ON flags
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER flag_notes_append_only BEFORE UPDATE OR DELETE ON flag_notes
  FOR EACH ROW EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER flags_no_truncate BEFORE TRUNCATE ON flags
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
CREATE TRIGGER flag_notes_no_truncate BEFORE TRUNCATE ON flag_notes
  FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();
--> statement-breakpoint
-- Breaches recorded before flags existed get theirs, without the tally snapshot they never had.
INSERT INTO flags (kind, entry_id, parcel_id, species_id, forager_id, permit_id, scopes, worst_state, tallies, created_at)
SELECT 'breach', e.id, e.parcel_id, e.species_id, e.forager_id, e.permit_id, '{}', 'over', '[]', e.created_at
FROM harvest_entries e WHERE e.breach AND NOT EXISTS (SELECT 1 FROM flags f WHERE f.entry_id = e.id);
