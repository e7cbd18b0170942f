import ICAL from 'ical.js';
import { afterEach, describe, expect, it } from 'vitest';
import { buildCalendarEvents, type FeedGrant, type FeedParcel, type FeedPermit } from '../../src/lib/calendar-events';
import { renderCalendar } from '../../src/server/calendar-feed';

/*
 * The calendar feed's events (issue 14). Whole days are iCalendar DATE values, "YYYYMMDD" with no
 * time and no zone (RFC 5545 §3.3.4); an all-day event's DTEND is the day after its last day
 * (§3.6.1: "the "DTEND" property ... is exclusive"). US DST in 2026 ends on Sunday 1 November
 * (15 U.S.C. 260a: first Sunday of November); New York is UTC−4 (EDT) before it. Expected dates are
 * read off the calendar by hand.
 */

const newYork = 'America/New_York';

const parcel = (overrides: Partial<FeedParcel> = {}): FeedParcel => ({
  id: 'parcel-1',
  name: 'Hemlock Hollow',
  timeZone: newYork,
  closures: [],
  allowances: [],
  ...overrides,
});

const permit = (overrides: Partial<FeedPermit> = {}): FeedPermit => ({
  id: 'permit-1',
  state: 'active',
  startsOn: '2026-03-01',
  endsOn: '2026-03-08',
  parcelId: 'parcel-1',
  parcelName: 'Hemlock Hollow',
  timeZone: newYork,
  clubName: null,
  ...overrides,
});

const chaga = { speciesId: 'chaga', commonName: 'Chaga', seasons: [{ start: '11-01', end: '03-15' }] };

type Parsed = { uid: string; summary: string; description: string; start: string; end: string; startIsDate: boolean };

function parse(text: string): { events: Parsed[]; zones: string[] } {
  const calendar = new ICAL.Component(ICAL.parse(text));
  const events = calendar.getAllSubcomponents('vevent').map((v) => {
    const start = v.getFirstPropertyValue('dtstart') as ICAL.Time;
    const end = v.getFirstPropertyValue('dtend') as ICAL.Time;
    return {
      uid: String(v.getFirstPropertyValue('uid')),
      summary: String(v.getFirstPropertyValue('summary')),
      description: String(v.getFirstPropertyValue('description')),
      start: start.toString(),
      end: end.toString(),
      startIsDate: start.isDate,
    };
  });
  return { events, zones: calendar.getAllSubcomponents('vtimezone').map((z) => String(z.getFirstPropertyValue('tzid'))) };
}

const savedTz = process.env.TZ;
afterEach(() => {
  if (savedTz === undefined) delete process.env.TZ;
  else process.env.TZ = savedTz;
});

describe('buildCalendarEvents and renderCalendar', () => {
  it('given a season opening on 2026-11-01 in America/New_York, the day DST ends, it is the whole date 20261101 to 20261102, whatever zone the server runs in', () => {
    for (const tz of ['UTC', 'Pacific/Kiritimati', 'Pacific/Pago_Pago']) {
      process.env.TZ = tz; // UTC+14 and UTC−11: a native Date read in the server's zone would slip a day
      const events = buildCalendarEvents({ permits: [], parcels: [parcel({ allowances: [chaga] })], now: new Date('2026-10-20T16:00:00Z') });
      const text = renderCalendar(events, new Date('2026-10-20T16:00:00Z'));
      expect(text, tz).toContain('DTSTART;VALUE=DATE:20261101\r\nDTEND;VALUE=DATE:20261102\r\n');
      const opening = parse(text).events.find((e) => e.summary === 'Season opens: Chaga on Hemlock Hollow');
      expect(opening, tz).toMatchObject({ start: '2026-11-01', end: '2026-11-02', startIsDate: true });
    }
  });

  it('given a permit from 2026-03-01 to 2026-03-08 (DST begins 2026-03-08), it is one all-day event ending the next day, exclusive: 20260309', () => {
    const text = renderCalendar(buildCalendarEvents({ permits: [permit()], parcels: [], now: new Date('2026-02-01T12:00:00Z') }), new Date('2026-02-01T12:00:00Z'));
    const [event] = parse(text).events;
    expect(event).toMatchObject({ uid: 'permit-permit-1@tallywood', summary: 'Permit: Hemlock Hollow', start: '2026-03-01', end: '2026-03-09', startIsDate: true });
    expect(event?.description).toContain('Identification is your responsibility.');
  });

  it('given requested, declined and revoked permits, it shows none of them; approved, active and expired ones it shows', () => {
    const permits = ['requested', 'declined', 'revoked', 'approved', 'active', 'expired'].map((state) => permit({ id: state, state }));
    const events = buildCalendarEvents({ permits, parcels: [], now: new Date('2026-02-01T12:00:00Z') });
    expect(events.map((e) => e.uid).sort()).toEqual(['permit-active@tallywood', 'permit-approved@tallywood', 'permit-expired@tallywood']);
  });

  it("given 2026-11-01T03:30Z, which is still 2026-10-31 in New York (EDT, UTC−4), it counts the next twelve months from the parcel's today", () => {
    const closingOnHalloween = { speciesId: 'hen', commonName: 'Hen of the woods', seasons: [{ start: '09-01', end: '10-31' }] };
    const now = new Date('2026-11-01T03:30:00Z');
    const inNewYork = buildCalendarEvents({ permits: [], parcels: [parcel({ allowances: [closingOnHalloween] })], now });
    const inUtc = buildCalendarEvents({ permits: [], parcels: [parcel({ timeZone: 'UTC', allowances: [closingOnHalloween] })], now });
    // New York's today is 2026-10-31: the closing day is today; twelve months run to 2027-10-30, which holds the next opening, 2027-09-01, but not its closing.
    expect(inNewYork.map((e) => [e.summary, e.firstDay])).toEqual([
      ['Season closes: Hen of the woods on Hemlock Hollow', '2026-10-31'],
      ['Season opens: Hen of the woods on Hemlock Hollow', '2027-09-01'],
    ]);
    // In UTC it is 2026-11-01 already: 2026-10-31 has passed, and 2027-10-31 is the last day of the twelve months.
    expect(inUtc.map((e) => [e.summary, e.firstDay])).toEqual([
      ['Season opens: Hen of the woods on Hemlock Hollow', '2027-09-01'],
      ['Season closes: Hen of the woods on Hemlock Hollow', '2027-10-31'],
    ]);
  });

  it('given a season across New Year (11-01 … 03-15) on 2026-12-03, it shows the closing on 2027-03-15 and the next opening on 2027-11-01, not the opening already past', () => {
    const events = buildCalendarEvents({ permits: [], parcels: [parcel({ allowances: [chaga] })], now: new Date('2026-12-03T15:00:00Z') });
    expect(events.map((e) => [e.uid, e.firstDay, e.lastDay])).toEqual([
      ['season-closes-parcel-1-chaga-2026-11-01@tallywood', '2027-03-15', '2027-03-15'],
      ['season-opens-parcel-1-chaga-2027-11-01@tallywood', '2027-11-01', '2027-11-01'],
    ]);
  });

  it('given a closure, it is one event over its days, its reason in the description, and ended closures are left out', () => {
    const closures = [
      { startsOn: '2026-12-24', endsOn: '2026-12-26', reason: 'Deer season' },
      { startsOn: '2026-06-01', endsOn: '2026-06-02', reason: 'Long over' },
    ];
    const now = new Date('2026-12-03T15:00:00Z');
    const { events, zones } = parse(renderCalendar(buildCalendarEvents({ permits: [], parcels: [parcel({ closures })], now }), now));
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({ uid: 'closure-parcel-1-2026-12-24-2026-12-26@tallywood', summary: 'Closed: Hemlock Hollow', start: '2026-12-24', end: '2026-12-27' });
    expect(events[0]?.description).toContain('Deer season');
    expect(zones).toEqual([newYork]);
  });

  it('given the same things on two days, it gives each the same UID, so a calendar app updates rather than duplicates', () => {
    const build = (now: Date) => buildCalendarEvents({ permits: [permit({ endsOn: '2027-12-31' })], parcels: [parcel({ allowances: [chaga] })], now }).map((e) => e.uid);
    const monday = build(new Date('2026-12-07T15:00:00Z'));
    const tuesday = build(new Date('2026-12-08T15:00:00Z'));
    expect(tuesday).toEqual(monday);
    expect(new Set(monday).size).toBe(monday.length);
  });

  it("given a landowner's grants, it shows each granted, active or expired permit on their land as a whole-day window naming the holder (a club by its name), and no request", () => {
    const grant = (overrides: Partial<FeedGrant>): FeedGrant => ({ ...permit(), holderName: 'Ada Birch', ...overrides });
    const grants = [
      grant({ id: 'g-personal', startsOn: '2026-12-10', endsOn: '2027-01-09' }),
      grant({ id: 'g-club', holderName: 'Rowan Steward', clubName: 'Ridge Club', state: 'approved', startsOn: '2027-01-01', endsOn: '2027-06-30' }),
      grant({ id: 'g-asked', state: 'requested' }),
    ];
    const now = new Date('2026-12-03T15:00:00Z');
    const { events } = parse(renderCalendar(buildCalendarEvents({ permits: [], parcels: [], grants, now }), now));
    expect(events.map((e) => [e.uid, e.summary, e.start, e.end])).toEqual([
      ['granted-g-personal@tallywood', 'Permit on your land: Ada Birch, Hemlock Hollow', '2026-12-10', '2027-01-10'],
      ['granted-g-club@tallywood', 'Permit on your land: Ridge Club, Hemlock Hollow', '2027-01-01', '2027-07-01'],
    ]);
    expect(events[1]?.description).toContain('a club permit');
  });

  it("given a parcel the landowner owns and also holds a permit on, its season days and closures appear once", () => {
    const own = parcel({ allowances: [chaga], closures: [{ startsOn: '2026-12-20', endsOn: '2026-12-24', reason: 'Logging' }] });
    const now = new Date('2026-12-03T15:00:00Z');
    const both = buildCalendarEvents({ permits: [], parcels: [own], ownParcels: [own], now }).map((e) => e.uid);
    const ownedOnly = buildCalendarEvents({ permits: [], parcels: [], ownParcels: [own], now }).map((e) => e.uid);
    expect(both).toEqual(ownedOnly);
    // The closure, Chaga's closing on 2027-03-15 and its next opening on 2027-11-01 (a season of 11-01 … 03-15, read by hand).
    expect(ownedOnly).toHaveLength(3);
  });
});
