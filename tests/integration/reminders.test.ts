import { eq, like } from 'drizzle-orm';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyMigrations } from '../../src/db/migrations';
import { markMailSent, recordMail } from '../../src/db/mail.queries';
import { getReminderSettings, saveReminderSettings } from '../../src/db/reminders.queries';
import { allowances, clubMemberships, clubs, outgoingMail, parcels, permits, species } from '../../src/db/schema';
import { sendDueReminders, type ReminderDelivery } from '../../src/server/reminders';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/*
 * The reminders job's work on a database of its own, at an injected instant. 2026-11-01T12:00Z is
 * 07:00 EST on 1 November in America/New_York (EDT ended at 06:00Z that day: IANA tz data, REFERENCES
 * §6), so the parcel's "in 14 days" is 15 November and its "tomorrow" 2 November, whatever the real clock.
 * Mail is recorded in the outbox (outgoing_mail) through the same query sendMail uses (src/db/mail.queries.ts),
 * which refuses a dedupe key it has seen; sending it is the send-mail job's concern (tests/integration/outbox.test.ts).
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const now = new Date('2026-11-01T12:00:00Z');
const ids = { owner: '', fay: '', gus: '', sam: '', mo: '', parcel: '', fayPermit: '', gusPermit: '', clubPermit: '' };
const delivered: ReminderDelivery[] = [];

/** Records the mail as sendMail does, once per dedupe key, and keeps what would have gone. */
async function deliver(mail: ReminderDelivery) {
  const id = await recordMail(db(), { purpose: mail.purpose, fromAddress: 'Tallywood <mail@reminders.test>', toAddress: mail.to, subject: mail.subject, textBody: mail.text, htmlBody: `<p>${mail.paragraphs.join('</p><p>')}</p>`, dedupeKey: mail.dedupeKey });
  if (!id) return;
  delivered.push(mail);
  await markMailSent(db(), { id, now });
}

const run = () => sendDueReminders(db(), { now, origin: 'https://tallywood.example', deliver, log: pino({ level: 'silent' }) });
const mailTo = (address: string) => db().select({ purpose: outgoingMail.purpose, dedupeKey: outgoingMail.dedupeKey, state: outgoingMail.state }).from(outgoingMail).where(eq(outgoingMail.toAddress, address));

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_reminders');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@reminders.test', 'Ona Owner', ['landowner']);
  ids.fay = await insertUser(db(), 'fay@reminders.test', 'Fay Forager');
  ids.gus = await insertUser(db(), 'gus@reminders.test', 'Gus Forager');
  ids.sam = await insertUser(db(), 'sam@reminders.test', 'Sam Steward');
  ids.mo = await insertUser(db(), 'mo@reminders.test', 'Mo Member');
  ids.parcel = (await one(db().insert(parcels).values({ ownerId: ids.owner, name: 'Hudson Wood', status: 'listed', boundary: referenceBoundary as never, areaM2: 1, timeZone: 'America/New_York' }).returning({ id: parcels.id }))).id;
  const permit = async (values: Partial<typeof permits.$inferInsert>) =>
    (await one(db().insert(permits).values({ parcelId: ids.parcel, state: 'active', startsOn: '2026-10-01', endsOn: '2026-11-15', ...values }).returning({ id: permits.id }))).id;
  ids.fayPermit = await permit({ holderUserId: ids.fay });
  ids.gusPermit = await permit({ holderUserId: ids.gus });
  const club = (await one(db().insert(clubs).values({ slug: 'reminders-club', name: 'Valley Foragers' }).returning({ id: clubs.id }))).id;
  await db().insert(clubMemberships).values([
    { clubId: club, userId: ids.sam, role: 'steward', state: 'active' },
    { clubId: club, userId: ids.mo, role: 'member', state: 'active' },
  ]);
  ids.clubPermit = await permit({ holderClubId: club, endsOn: '2027-03-31' });
  const chaga = (await one(db().insert(species).values({ slug: 'reminders-chaga', scientificName: 'Inonotus obliquus', commonName: 'Chaga', kind: 'mushroom', usualUnit: 'g' }).returning({ id: species.id }))).id;
  await db().insert(allowances).values({ parcelId: ids.parcel, speciesId: chaga, seasons: [{ start: '11-02', end: '12-15' }], methods: ['cut'] });
  await saveReminderSettings(db(), { userId: ids.gus, settings: { permitEnding: false, seasonOpening: false, closureStarting: false, weeklyDigest: false }, now });
});

afterAll(async () => {
  await throwaway?.drop();
});

describe('sendDueReminders', () => {
  it('given a permit whose last day is 15 local days on, run twice, it records exactly one permit-ending reminder for its holder', async () => {
    await run();
    await run();
    const key = `reminder:permit-ending:${ids.fayPermit}:2026-11-15:${ids.fay}`;
    const rows = await db().select({ toAddress: outgoingMail.toAddress, state: outgoingMail.state }).from(outgoingMail).where(eq(outgoingMail.dedupeKey, key));
    expect(rows).toEqual([{ toAddress: 'fay@reminders.test', state: 'sent' }]);
    const sent = delivered.filter((m) => m.dedupeKey === key);
    expect(sent).toHaveLength(1);
    expect(sent[0]?.text).toContain('Your permit for Hudson Wood ends in 14 days');
    expect(sent[0]?.text).toContain('Sunday, November 15, 2026'); // 1 November 2026 is a Sunday (US DST ends on the first Sunday of November)
    expect(sent[0]?.text).toContain('Turn these off: https://tallywood.example/settings');
  });

  it('given a season opening on 2 November on the parcel, its permit holder gets one season reminder naming the species', async () => {
    const rows = await mailTo('fay@reminders.test');
    expect(rows.filter((r) => r.purpose === 'reminder-season-opening')).toEqual([
      { purpose: 'reminder-season-opening', dedupeKey: `reminder:season-opening:${ids.parcel}:2026-11-02:${ids.fay}`, state: 'sent' },
    ]);
    expect(delivered.find((m) => m.to === 'fay@reminders.test' && m.purpose === 'reminder-season-opening')?.subject).toBe('Chaga comes into season on Hudson Wood tomorrow');
  });

  it('given a person who switched every reminder off, nothing is sent to them, though their permit ends the same day', async () => {
    expect(await getReminderSettings(db(), { userId: ids.gus })).toEqual({ permitEnding: false, seasonOpening: false, closureStarting: false, weeklyDigest: false });
    expect(await mailTo('gus@reminders.test')).toEqual([]);
  });

  it("given a club's permit, its members get the season reminder and neither the steward nor the member a permit-ending one (it ends in March)", async () => {
    expect((await mailTo('sam@reminders.test')).map((r) => r.purpose)).toEqual(['reminder-season-opening']);
    expect((await mailTo('mo@reminders.test')).map((r) => r.purpose)).toEqual(['reminder-season-opening']);
    expect(await db().select({ key: outgoingMail.dedupeKey }).from(outgoingMail).where(like(outgoingMail.dedupeKey, 'reminder:permit-ending:%'))).toHaveLength(1);
  });

  it('given Monday 2 November in New York, its landowner gets one digest of the week with the access request made in it, and a landowner whose week was quiet gets none', async () => {
    const monday = new Date('2026-11-02T12:00:00Z'); // 07:00 EST on Monday 2 November
    const quiet = await insertUser(db(), 'quiet@reminders.test', 'Quinn Quiet', ['landowner']);
    await db().insert(parcels).values({ ownerId: quiet, name: 'Still Meadow', status: 'listed', boundary: referenceBoundary as never, areaM2: 1, timeZone: 'America/New_York' });
    // An access request on Wednesday 28 October, inside the week of 26 October to 1 November.
    await db().insert(permits).values({ parcelId: ids.parcel, holderUserId: ids.mo, requestedBy: ids.mo, state: 'requested', startsOn: '2026-11-10', endsOn: '2026-12-31', createdAt: new Date('2026-10-28T15:00:00Z') });
    const atMonday = () => sendDueReminders(db(), { now: monday, origin: 'https://tallywood.example', deliver, log: pino({ level: 'silent' }) });
    await atMonday();
    await atMonday();
    expect(await mailTo('owner@reminders.test')).toEqual([{ purpose: 'reminder-weekly-digest', dedupeKey: `reminder:weekly-digest:${ids.owner}:2026-11-02`, state: 'sent' }]);
    const digest = delivered.find((m) => m.to === 'owner@reminders.test');
    expect(digest?.text).toContain('Hudson Wood: 0 harvest entries, 0 flags, 1 access request.');
    expect(digest?.text).toContain('Monday, October 26, 2026 to Sunday, November 1, 2026');
    expect(await mailTo('quiet@reminders.test')).toEqual([]);
  });

  it('given a person with no settings row, every kind is on', async () => {
    expect(await getReminderSettings(db(), { userId: ids.fay })).toEqual({ permitEnding: true, seasonOpening: true, closureStarting: true, weeklyDigest: true });
  });
});
