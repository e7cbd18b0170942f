-- The outbox (src/server/jobs/send-mail.ts): each outgoing mail keeps what is needed to send it later,
-- and how often sending it was tried. `queued` becomes `waiting`, and `retrying` is new. A mail still
-- `queued` was recorded before its text was kept and can never be sent: it is marked failed, and gives
-- up its dedupe key as a failed mail always has, so asking again sends it. No new table: tallywood_app
-- keeps the SELECT, INSERT, UPDATE, DELETE on outgoing_mail that 0013 granted.
ALTER TABLE "outgoing_mail" ALTER COLUMN "state" SET DATA TYPE text;--> statement-breakpoint
UPDATE "outgoing_mail" SET "state" = 'failed', "dedupe_key" = NULL, "error" = coalesce("error", 'recorded before the outbox, without its text') WHERE "state" = 'queued';--> statement-breakpoint
ALTER TABLE "outgoing_mail" ALTER COLUMN "state" SET DEFAULT 'waiting'::text;--> statement-breakpoint
DROP TYPE "public"."mail_state";--> statement-breakpoint
CREATE TYPE "public"."mail_state" AS ENUM('waiting', 'sent', 'retrying', 'failed');--> statement-breakpoint
ALTER TABLE "outgoing_mail" ALTER COLUMN "state" SET DEFAULT 'waiting'::"public"."mail_state";--> statement-breakpoint
ALTER TABLE "outgoing_mail" ALTER COLUMN "state" SET DATA TYPE "public"."mail_state" USING "state"::"public"."mail_state";--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD COLUMN "from_address" text;--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD COLUMN "text_body" text;--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD COLUMN "html_body" text;--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD COLUMN "attachments" jsonb;--> statement-breakpoint
ALTER TABLE "outgoing_mail" ADD COLUMN "attempts" integer DEFAULT 0 NOT NULL;--> statement-breakpoint
CREATE INDEX "outgoing_mail_unsent" ON "outgoing_mail" USING btree ("state","created_at") WHERE "outgoing_mail"."state" <> 'sent';