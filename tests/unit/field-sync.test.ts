import { describe, expect, it } from 'vitest';
import { fieldSyncEnvelopeSchema, fieldSyncSchema, parseSyncItems } from '../../src/lib/field.schemas';
import { clockRefusal, permitRecordedUnder, syncFlagFor, syncSeason } from '../../src/lib/field/sync';
import type { AllowanceFacts, ParcelFacts, PermitFacts, Tally } from '../../src/lib/field/types';

/** The pure rules of syncing what a device recorded offline (src/lib/field/sync.ts). */

const now = new Date('2026-07-15T20:00:00Z');
const packAsOf = new Date('2026-07-15T12:00:00Z');

describe('clockRefusal', () => {
  it('given an instant 2 minutes ahead, it believes it; 2 minutes and 1 second ahead, it refuses, saying how far ahead', () => {
    expect(clockRefusal({ recordedAt: new Date('2026-07-15T20:02:00Z'), packAsOf, now })).toBeNull();
    expect(clockRefusal({ recordedAt: new Date('2026-07-15T20:02:01Z'), packAsOf, now })).toBe(
      "Your phone's clock is ahead of the real time by about 2 minutes; set it to automatic time and send again.",
    );
    expect(clockRefusal({ recordedAt: new Date('2026-07-15T23:00:00Z'), packAsOf, now })).toMatch(/ahead of the real time by about 3 hours;/);
  });

  it('given an instant one second before the pack was downloaded, it refuses; at the pack instant, it believes it', () => {
    expect(clockRefusal({ recordedAt: packAsOf, packAsOf, now })).toBeNull();
    expect(clockRefusal({ recordedAt: new Date(packAsOf.getTime() - 1000), packAsOf, now })).toMatch(/before your field pack was downloaded/);
  });

  it('given an instant 30 days old it believes it; 30 days and a minute, it refuses', () => {
    const day = 24 * 60 * 60 * 1000;
    const old = new Date(now.getTime() - 30 * day);
    expect(clockRefusal({ recordedAt: old, packAsOf: old, now })).toBeNull();
    const older = new Date(now.getTime() - 30 * day - 60_000);
    expect(clockRefusal({ recordedAt: older, packAsOf: older, now })).toMatch(/more than 30 days ago/);
  });
});

const permit = (p: Partial<PermitFacts>): PermitFacts => ({
  id: 'p', holderUserId: 'f', holderClubId: null, state: 'active', startsOn: '2026-01-01', endsOn: '2026-12-31', feeMinor: null, feePaid: false, acceptedTermsId: null, ...p,
});
const parcel = (permits: PermitFacts[]): ParcelFacts => ({
  id: 'parcel', name: 'Lot', timeZone: 'America/New_York', nearingThresholdPercent: 80, boundary: { type: 'MultiPolygon', coordinates: [] }, zones: [], closures: [], hazards: [],
  currentTermsId: null, permits, allowances: [],
});

describe('permitRecordedUnder', () => {
  const forager = { id: 'f', clubIds: ['c'] };

  it('given a good permit, it is that one; given only a revoked one, the revoked one; given only a declined request, none', () => {
    expect(permitRecordedUnder(parcel([permit({ id: 'good' })]), forager, '2026-07-15')?.id).toBe('good');
    expect(permitRecordedUnder(parcel([permit({ id: 'gone', state: 'revoked' })]), forager, '2026-07-15')?.id).toBe('gone');
    expect(permitRecordedUnder(parcel([permit({ id: 'no', state: 'declined' })]), forager, '2026-07-15')).toBeNull();
  });

  it("given an expired club permit and an expired one of the forager's own, it is the forager's own", () => {
    const club = permit({ id: 'club', holderUserId: null, holderClubId: 'c', state: 'expired', endsOn: '2026-07-01' });
    const own = permit({ id: 'own', state: 'expired', endsOn: '2026-06-01' });
    expect(permitRecordedUnder(parcel([club, own]), forager, '2026-07-15')?.id).toBe('own');
  });
});

describe('syncSeason', () => {
  const allowance = { seasons: [{ start: '06-01', end: '09-30' }] } as AllowanceFacts;
  it('given a day in season, it is the season; out of season, the day itself, so it counts in no season', () => {
    expect(syncSeason(allowance, '2026-07-15')).toEqual({ start: '2026-06-01', end: '2026-09-30', inSeason: true });
    expect(syncSeason(allowance, '2026-10-02')).toEqual({ start: '2026-10-02', end: '2026-10-02', inSeason: false });
  });
});

const tally = (scope: Tally['scope'], state: Tally['state']): Tally => ({
  scope, measure: 'mass', limit: { quantity: '500', unit: 'g', fromPermit: false }, used: '0', remaining: '0', percent: 0, state,
});

describe('syncFlagFor', () => {
  const before = [tally('club-season', 'within')];
  const over = [tally('club-season', 'over')];

  it('given over without the going over confirmed, it is over-on-sync; confirmed, a breach', () => {
    expect(syncFlagFor(before, over, { breach: true, acknowledged: false, offPermit: null })).toMatchObject({ kind: 'over-on-sync', scopes: ['club-season'], worstState: 'over' });
    expect(syncFlagFor(before, over, { breach: true, acknowledged: true, offPermit: null })).toMatchObject({ kind: 'breach', scopes: ['club-season'] });
  });

  it('given reasons it was not clear, it is off-permit whatever the tallies, with the reasons in its message', () => {
    const flag = syncFlagFor(before, before, { breach: false, acknowledged: false, offPermit: ['Your permit for Lot was revoked.'] });
    expect(flag).toMatchObject({ kind: 'off-permit', scopes: [] });
    expect(flag?.message).toContain('Your permit for Lot was revoked.');
  });

  it('given a tally into nearing, it is nearing; given nothing raised, none', () => {
    expect(syncFlagFor(before, [tally('club-season', 'nearing')], { breach: false, acknowledged: false, offPermit: null })?.kind).toBe('nearing');
    expect(syncFlagFor(before, before, { breach: false, acknowledged: false, offPermit: null })).toBeNull();
  });
});

describe('fieldSyncSchema', () => {
  const entry = {
    kind: 'entry', idempotencyKey: 'key-00000001', recordedAt: '2026-07-15T10:00:00-04:00', position: { longitude: -72.9, latitude: 43.9, accuracyM: 5, source: 'gps' },
    parcelId: '00000000-0000-4000-8000-000000000001', speciesId: '00000000-0000-4000-8000-000000000002', method: 'pick', quantities: [{ quantity: '10', unit: 'g' }], acknowledgeOver: false,
  };
  const issue = (body: unknown) => {
    const r = fieldSyncSchema.safeParse(body);
    return r.success ? null : { path: r.error.issues[0]?.path.join('.'), message: r.error.issues[0]?.message };
  };

  it('given an instant with its offset, it reads the same instant as UTC', () => {
    const parsed = fieldSyncSchema.parse({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items: [entry] });
    expect(parsed.items[0]?.recordedAt.toISOString()).toBe('2026-07-15T14:00:00.000Z');
  });

  it('given no items, 51 items, two items with one key, an instant without an offset or no forager, it names what to fix', () => {
    expect(issue({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items: [] })?.message).toBe('Send at least one item.');
    const many = Array.from({ length: 51 }, (_, n) => ({ ...entry, idempotencyKey: `key-${String(n).padStart(8, '0')}` }));
    expect(issue({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items: many })?.message).toMatch(/at most 50 items/);
    expect(issue({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items: [entry, entry] })?.message).toMatch(/share one/);
    expect(issue({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00', items: [entry] })).toMatchObject({ path: 'packAsOf' });
    expect(issue({ packAsOf: '2026-07-15T12:00:00Z', items: [entry] })).toEqual({ path: 'foragerId', message: 'Name the forager who recorded these (foragerId).' });
    expect(issue({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items: [{ ...entry, position: { ...entry.position, source: 'guess' } }] })).toMatchObject({ path: 'items.0.position.source' });
  });

  it('given a batch whose second item is malformed, the list is read and that item alone is refused with what is wrong', () => {
    const bad = { ...entry, idempotencyKey: 'key-00000002', quantities: [{ quantity: '0', unit: 'g' }] };
    const { items } = fieldSyncEnvelopeSchema.parse({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items: [entry, bad] });
    const read = parseSyncItems(items);
    expect(read[0]).toMatchObject({ ok: true, item: { idempotencyKey: 'key-00000001', kind: 'entry' } });
    expect(read[1]).toEqual({ ok: false, idempotencyKey: 'key-00000002', kind: 'entry', message: 'This was not saved (quantities.0.quantity): Enter how much you took.' });
  });

  it('given an item without a key or of an unknown kind, the whole body is refused', () => {
    const envelope = (items: unknown[]) => fieldSyncEnvelopeSchema.safeParse({ foragerId: 'a-forager', packAsOf: '2026-07-15T12:00:00Z', items });
    expect(envelope([{ ...entry, idempotencyKey: undefined }]).success).toBe(false);
    expect(envelope([{ ...entry, kind: 'photo' }]).success).toBe(false);
  });
});
