-- How many groups the audit's grouping of the kept totals makes (season, forager, permit and club
-- within a parcel, species and measure). Without it PostgreSQL multiplies the columns' separate
-- counts of distinct values, expects far more groups than there are, and sorts a million rows on
-- disk where a hash table of a few thousand groups does (PostgreSQL manual, "Extended Statistics",
-- multivariate n-distinct counts). Autovacuum's ANALYZE keeps it current; the migration fills it once.
CREATE STATISTICS IF NOT EXISTS "harvest_totals_groups" (ndistinct)
  ON "parcel_id", "species_id", "measure", "season_start", "season_end", "forager_id", "permit_id", "club_id" FROM "harvest_totals";
--> statement-breakpoint
ANALYZE "harvest_totals";
