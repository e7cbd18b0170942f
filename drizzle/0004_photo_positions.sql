ALTER TABLE "harvest_entries" ADD COLUMN "photo_distance_m" double precision;--> statement-breakpoint
ALTER TABLE "uploads" ADD COLUMN "gps_position" geometry(Point,4326);