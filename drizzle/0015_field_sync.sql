-- Syncing what a device recorded offline (POST /api/field/sync): check-ins keep the device's instant
-- beside the one the server received them at, where the position came from (a fix or a tap on the
-- map), and a key of the forager's own like the ledger's; entries keep the device's instant; flags get
-- two kinds raised on sync and the sentence the device was told. The new flag kinds are not used in
-- this migration: a value added by ALTER TYPE … ADD VALUE cannot be used in the transaction that adds it.
CREATE TYPE "public"."position_source" AS ENUM('gps', 'tap');--> statement-breakpoint
ALTER TYPE "public"."flag_kind" ADD VALUE 'over-on-sync';--> statement-breakpoint
ALTER TYPE "public"."flag_kind" ADD VALUE 'off-permit';--> statement-breakpoint
ALTER TABLE "check_ins" ADD COLUMN "device_recorded_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "check_ins" ADD COLUMN "received_at" timestamp with time zone DEFAULT now() NOT NULL;--> statement-breakpoint
ALTER TABLE "check_ins" ADD COLUMN "position_source" "position_source" DEFAULT 'gps' NOT NULL;--> statement-breakpoint
ALTER TABLE "check_ins" ADD COLUMN "idempotency_key" text;--> statement-breakpoint
ALTER TABLE "check_ins" ADD COLUMN "request_hash" text;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD COLUMN "device_recorded_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "flags" ADD COLUMN "message" text;--> statement-breakpoint
CREATE UNIQUE INDEX "check_ins_forager_key" ON "check_ins" USING btree ("forager_id","idempotency_key");--> statement-breakpoint
-- The check-ins made before this were received when they were made.
UPDATE "check_ins" SET "received_at" = "at";--> statement-breakpoint
-- Check-ins are a record like the ledger: the app inserts and reads them, never changes one.
REVOKE UPDATE, DELETE ON "check_ins" FROM tallywood_app;
