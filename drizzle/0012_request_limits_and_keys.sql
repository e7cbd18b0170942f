-- Rate limits kept by rate-limiter-flexible's Drizzle store (src/server/rate-limits.ts); idempotency
-- keys that are each forager's own, with what was asked under them (request_hash, null on older
-- entries); mails that must go once (a breach notice per entry and recipient); and the index that
-- a visit's deletion needs to check harvest_entries.counted_visit_id without reading every entry.
CREATE TABLE "rate_limits" (
	"key" text PRIMARY KEY NOT NULL,
	"points" integer NOT NULL,
	"expire" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "harvest_entries" DROP CONSTRAINT "harvest_entries_idempotency_key_unique";--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "request_hash" text;--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD COLUMN "dedupe_key" text;--> statement-breakpoint
CREATE UNIQUE INDEX "harvest_entries_forager_key" ON "harvest_entries" USING btree ("forager_id","idempotency_key");--> statement-breakpoint
CREATE INDEX "harvest_entries_counted_visit" ON "harvest_entries" USING btree ("counted_visit_id") WHERE "harvest_entries"."counted_visit_id" is not null;--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD CONSTRAINT "outgoing_mail_dedupe_key_unique" UNIQUE("dedupe_key");