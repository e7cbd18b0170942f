import { sql } from 'drizzle-orm';
import { check, index, integer, jsonb, pgTable, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';
import { at, createdAt, id, point } from './columns';
import { mailStateEnum, paymentStateEnum, uploadPurposeEnum } from './enums';
import { users } from './auth';
import { permits } from './permits';

/** A stored file. The bytes live behind the storage interface (src/lib/storage); this is the record. */
export const uploads = pgTable(
  'uploads',
  {
    id: id(),
    ownerId: text('owner_id').notNull().references(() => users.id),
    purpose: uploadPurposeEnum('purpose').notNull(),
    storageKey: text('storage_key').notNull().unique(),
    contentType: text('content_type').notNull(),
    byteSize: integer('byte_size').notNull(),
    sha256: text('sha256').notNull(),
    /** Where a photo says it was taken (its EXIF GPS), when it says so. */
    gpsPosition: point('gps_position'),
    createdAt: createdAt(),
  },
  (t) => [index('uploads_owner').on(t.ownerId), check('uploads_size', sql`${t.byteSize} >= 0`)],
);

/** Who did what to which thing. Append-only (a trigger refuses UPDATE and DELETE). */
export const auditEvents = pgTable(
  'audit_events',
  {
    id: id(),
    actorId: text('actor_id').references(() => users.id),
    action: text('action').notNull(),
    subjectType: text('subject_type').notNull(),
    subjectId: text('subject_id').notNull(),
    detail: jsonb('detail').$type<Record<string, unknown>>().notNull().default({}),
    at: at('at').notNull().defaultNow(),
  },
  (t) => [index('audit_events_subject').on(t.subjectType, t.subjectId, t.at)],
);

/** Every e-mail the app sends, whatever the transport; also the record the sign-in rate limit counts. */
export const outgoingMail = pgTable(
  'outgoing_mail',
  {
    id: id(),
    purpose: text('purpose').notNull(),
    toAddress: text('to_address').notNull(),
    subject: text('subject').notNull(),
    /** The client address that caused the mail, where a request did (sign-in links). */
    clientAddress: text('client_address'),
    /** A mail that must go once only (a breach notice per entry and recipient): a second with the same key is not sent. */
    dedupeKey: text('dedupe_key').unique(),
    /** The mail itself, kept so the `send-mail` job (src/server/jobs/send-mail.ts) can send it later; null on mail recorded before the outbox (0020). */
    fromAddress: text('from_address'),
    textBody: text('text_body'),
    htmlBody: text('html_body'),
    attachments: jsonb('attachments').$type<{ filename: string; contentType: string; content: string }[]>(),
    state: mailStateEnum('state').notNull().default('waiting'),
    /** How many times sending it was tried. */
    attempts: integer('attempts').notNull().default(0),
    /** The last try's error, as the mail server or the transport put it. */
    error: text('error'),
    createdAt: createdAt(),
    sentAt: at('sent_at'),
  },
  (t) => [
    index('outgoing_mail_to').on(t.purpose, t.toAddress, t.createdAt),
    index('outgoing_mail_client').on(t.purpose, t.clientAddress, t.createdAt),
    // The sweep and /api/health read only the mail not sent yet.
    index('outgoing_mail_unsent').on(t.state, t.createdAt).where(sql`${t.state} <> 'sent'`),
  ],
);

export const payments = pgTable(
  'payments',
  {
    id: id(),
    permitId: uuid('permit_id').notNull().references(() => permits.id),
    payerId: text('payer_id').notNull().references(() => users.id),
    provider: text('provider').notNull().default('stripe'),
    providerSessionId: text('provider_session_id').unique(),
    providerPaymentId: text('provider_payment_id'),
    amountMinor: integer('amount_minor').notNull(),
    currency: text('currency').notNull(),
    state: paymentStateEnum('state').notNull().default('pending'),
    createdAt: createdAt(),
    paidAt: at('paid_at'),
    refundedAt: at('refunded_at'),
    /** When the last automatic try to give a paid fee back failed: it must be refunded by hand. Cleared by a refund. */
    refundFailedAt: at('refund_failed_at'),
  },
  (t) => [index('payments_permit').on(t.permitId), check('payments_amount', sql`${t.amountMinor} >= 0`)],
);

/** Webhook events already handled, so a replayed event changes nothing. */
export const paymentEvents = pgTable('payment_events', {
  providerEventId: text('provider_event_id').primaryKey(),
  type: text('type').notNull(),
  payload: jsonb('payload').notNull(),
  receivedAt: createdAt(),
});

export type Upload = typeof uploads.$inferSelect;
export type AuditEvent = typeof auditEvents.$inferSelect;
export type OutgoingMail = typeof outgoingMail.$inferSelect;
export type Payment = typeof payments.$inferSelect;

/**
 * The counters of rate-limit-flexible's Drizzle store (src/server/rate-limits.ts): one row per limit
 * and key, its points spent in the current window and when the window ends. Each request adds its
 * point in one INSERT … ON CONFLICT DO UPDATE, so requests at the same moment cannot both pass.
 */
export const rateLimits = pgTable('rate_limits', {
  key: text('key').primaryKey(),
  points: integer('points').notNull(),
  expire: timestamp('expire', { withTimezone: true }),
});

/**
 * A person's private calendar feed (issue 14). The address carries a random token; only its SHA-256
 * is kept, so the table alone opens no feed. One live feed per account: making a new one revokes the old.
 */
export const calendarFeeds = pgTable(
  'calendar_feeds',
  {
    id: id(),
    accountId: text('account_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
    /** SHA-256 of the token in the address, hex. */
    tokenHash: text('token_hash').notNull().unique(),
    createdAt: createdAt(),
    revokedAt: at('revoked_at'),
  },
  (t) => [uniqueIndex('calendar_feeds_one_live').on(t.accountId).where(sql`${t.revokedAt} is null`)],
);
