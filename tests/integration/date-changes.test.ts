import { eq, sql } from 'drizzle-orm';
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, createDb, type Db } from '../../src/db/client';
import { applyMigrations } from '../../src/db/migrations';
import { parcels, permits, visits } from '../../src/db/schema';
import { applyDateChanges } from '../../src/server/jobs/date-changes';
import { startJobs, stopJobs } from '../../src/server/jobs/queue';
import { createThrowawayDatabase, insertUser, migrationsFolder, one, referenceBoundary, type ThrowawayDatabase } from './throwaway-database';

/*
 * The `date-changes` job at injected instants on a database of its own: a permit begins at its
 * parcel's local midnight and a visit left open closes at the end of its parcel-local day, whatever
 * the UTC date. Offsets and the 2026 changes are the IANA tz data's (REFERENCES §6: `zdump -v` of
 * the system’s tzdata): America/New_York is EDT (UTC−4) until 2026-11-01T06:00Z, then EST (UTC−5);
 * Pacific/Auckland is NZDT (UTC+13) from 2026-09-26T14:00Z to 2027-04-03T14:00Z.
 * The last test starts the queue itself, as the server does, signed in as the app's role.
 */
let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};

const ids = { newYork: '', auckland: '', owner: '', fay: '', gus: '', hana: '' };

/** An approved permit of Fay's with no fee, on a parcel with no terms: only its first day keeps it from being active. */
async function approvedPermit(parcelId: string, startsOn: string, endsOn = '2027-03-31') {
  return (await one(db().insert(permits).values({ parcelId, holderUserId: ids.fay, state: 'approved', startsOn, endsOn }).returning({ id: permits.id }))).id;
}

async function stateOf(permitId: string) {
  return (await one(db().select({ state: permits.state }).from(permits).where(eq(permits.id, permitId)))).state;
}

async function visitOf(visitId: string) {
  return one(db().select({ endedAt: visits.endedAt, endedBy: visits.endedBy }).from(visits).where(eq(visits.id, visitId)));
}

const at = (iso: string) => applyDateChanges(db(), { now: new Date(iso) });

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_dates');
  await applyMigrations(throwaway.db, migrationsFolder);
  ids.owner = await insertUser(db(), 'owner@dates.test', 'Ona Owner', ['landowner']);
  ids.fay = await insertUser(db(), 'fay@dates.test', 'Fay Forager');
  ids.gus = await insertUser(db(), 'gus@dates.test', 'Gus Forager');
  ids.hana = await insertUser(db(), 'hana@dates.test', 'Hana Forager');
  const parcel = (name: string, timeZone: string) =>
    one(db().insert(parcels).values({ ownerId: ids.owner, name, status: 'listed', boundary: referenceBoundary as never, areaM2: 1, timeZone }).returning({ id: parcels.id }));
  ids.newYork = (await parcel('Hudson Wood', 'America/New_York')).id;
  ids.auckland = (await parcel('Waitakere Edge', 'Pacific/Auckland')).id;
});

afterAll(async () => {
  await stopJobs();
  await throwaway?.drop();
});

// The tests run in order, each at later instants than the one before: every run moves every permit.
describe('applyDateChanges', () => {
  it('given the New York DST change on 1 November 2026, permits begin at 04:00Z that day (EDT) and at 05:00Z the next (EST), and one ending on the 1st expires at 05:00Z on the 2nd', async () => {
    const first = await approvedPermit(ids.newYork, '2026-11-01');
    const second = await approvedPermit(ids.newYork, '2026-11-02');
    const active = (await one(db().insert(permits).values({ parcelId: ids.newYork, holderUserId: ids.fay, state: 'active', startsOn: '2026-10-01', endsOn: '2026-11-01' }).returning({ id: permits.id }))).id;

    await at('2026-11-01T03:59:59Z'); // 23:59:59 EDT on 31 October
    expect(await stateOf(first)).toBe('approved');
    await at('2026-11-01T04:00:00Z'); // 00:00 EDT on 1 November
    expect(await stateOf(first)).toBe('active');
    expect(await stateOf(second)).toBe('approved');

    await at('2026-11-02T04:30:00Z'); // 23:30 EST on 1 November: an hour later than it would be under EDT
    expect(await stateOf(second)).toBe('approved');
    expect(await stateOf(active)).toBe('active');
    await at('2026-11-02T05:00:00Z'); // 00:00 EST on 2 November
    expect(await stateOf(second)).toBe('active');
    expect(await stateOf(active)).toBe('expired');
  });

  it('given a visit opened on 1 November (25 hours long in New York), it stays open until 05:00Z on the 2nd and then ends at that instant, by end of day', async () => {
    const visitId = (await one(db().insert(visits).values({ foragerId: ids.gus, parcelId: ids.newYork, localDate: '2026-11-01', startedAt: new Date('2026-11-01T15:00:00Z') }).returning({ id: visits.id }))).id;
    await at('2026-11-02T04:59:59Z');
    expect(await visitOf(visitId)).toEqual({ endedAt: null, endedBy: null });
    await at('2026-11-02T05:00:01Z');
    expect(await visitOf(visitId)).toEqual({ endedAt: new Date('2026-11-02T05:00:00Z'), endedBy: 'end-of-day' });
  });

  it('given permits from 10 December 2026 in Auckland and in New York, each begins at its own midnight: 11:00Z on the 9th (NZDT) and 05:00Z on the 10th (EST)', async () => {
    const auckland = await approvedPermit(ids.auckland, '2026-12-10');
    const newYork = await approvedPermit(ids.newYork, '2026-12-10');

    await at('2026-12-09T10:59:59Z'); // 23:59:59 NZDT on the 9th
    expect([await stateOf(auckland), await stateOf(newYork)]).toEqual(['approved', 'approved']);
    await at('2026-12-09T11:00:00Z'); // 00:00 NZDT on the 10th; 06:00 EST on the 9th
    expect([await stateOf(auckland), await stateOf(newYork)]).toEqual(['active', 'approved']);
    await at('2026-12-10T04:59:59Z'); // 23:59:59 EST on the 9th
    expect(await stateOf(newYork)).toBe('approved');
    await at('2026-12-10T05:00:00Z'); // 00:00 EST on the 10th
    expect(await stateOf(newYork)).toBe('active');
  });

  it('given a visit on 10 December in Auckland, it ends at 11:00Z on the 10th, the local midnight that ends it', async () => {
    const visitId = (await one(db().insert(visits).values({ foragerId: ids.hana, parcelId: ids.auckland, localDate: '2026-12-10', startedAt: new Date('2026-12-09T20:00:00Z') }).returning({ id: visits.id }))).id;
    await at('2026-12-10T10:59:59Z');
    expect((await visitOf(visitId)).endedAt).toBeNull();
    await at('2026-12-10T11:00:00Z');
    expect(await visitOf(visitId)).toEqual({ endedAt: new Date('2026-12-10T11:00:00Z'), endedBy: 'end-of-day' });
  });
});

describe('startJobs', () => {
  let app: Db | undefined;
  afterAll(async () => {
    await stopJobs();
    if (app) await closeDb(app);
  });

  it("given the app's role and a schedule left by a job since removed, it keeps date-changes and the outbox's send-mail sweep on a one-minute cron and reminders on a 15-minute one in pgboss.schedule, drops the removed one, runs date-changes once at start, and the role still owns nothing", async () => {
    const appUrl = process.env.DATABASE_URL;
    if (!appUrl || !throwaway) throw new Error('DATABASE_URL is not set');
    // The app's role (tallywood_web, as the server signs in) on this test's own database.
    const url = new URL(appUrl);
    url.pathname = `/${throwaway.name}`;
    app = createDb(url.toString(), { max: 2, hotMax: 1 });
    // A nightly job an earlier version had: its queue and its schedule are still in the database.
    await db().execute(sql`select pgboss.create_queue('retired-nightly', '{}'::json)`);
    await db().execute(sql`insert into pgboss.schedule (name, cron, timezone) values ('retired-nightly', '0 3 * * *', 'UTC')`);
    await startJobs({ db: app, databaseUrl: url.toString(), log: pino({ level: 'silent' }) });

    const schedules = await db().execute<{ name: string; cron: string; timezone: string }>(sql`select name, cron, timezone from pgboss.schedule order by name`);
    expect([...schedules]).toEqual([
      { name: 'date-changes', cron: '* * * * *', timezone: 'UTC' },
      { name: 'reminders', cron: '*/15 * * * *', timezone: 'UTC' },
      { name: 'send-mail', cron: '* * * * *', timezone: 'UTC' },
    ]);

    // The worker polls every 5 s; the job sent at start completes within a few.
    await expect
      .poll(async () => (await db().execute<{ n: number }>(sql`select count(*)::int as n from pgboss.job where name = 'date-changes' and state = 'completed'`))[0]?.n, { timeout: 15_000, interval: 500 })
      .toBeGreaterThanOrEqual(1);

    // The queue's partitions were made by create_queue as the migration's role, not the app's.
    const owned = await db().execute<{ n: number }>(sql`
      select count(*)::int as n from pg_class c join pg_namespace n on n.oid = c.relnamespace
      where n.nspname = 'pgboss' and pg_get_userbyid(c.relowner) in ('tallywood_web', 'tallywood_app')`);
    expect(owned[0]?.n).toBe(0);
    const partitions = await db().execute<{ n: number }>(sql`select count(*)::int as n from pgboss.queue where name in ('date-changes', '__pgboss__send-it')`);
    expect(partitions[0]?.n).toBe(2);
  }, 25_000);
});
