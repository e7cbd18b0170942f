import { describe, expect, it } from 'vitest';
import { formatLongDate, reminderMail, reminderText } from '../../src/lib/reminder-words';
import { defaultReminderSettings, digestLines, digestWeek, dueReminders, type PermitFact, type ReminderFacts } from '../../src/lib/reminders';

/*
 * Which reminders are due, by each parcel's local date. Offsets and the 2026 changes are the IANA tz
 * data's (REFERENCES §6: `zdump -v` of the system's tzdata): America/New_York is EDT (UTC−4) until
 * 2026-11-01T06:00Z, then EST (UTC−5), so its 1 November is 25 hours long, 04:00Z to 05:00Z the next
 * day; Pacific/Auckland is NZDT (UTC+13) from 2026-09-26T14:00Z to 2027-04-03T14:00Z, so its days
 * begin at 11:00Z the UTC day before. Weekdays: 1 November 2026 is a Sunday (the first Sunday of
 * November, when US DST ends, 15 U.S.C. 260a).
 */
const newYork = { parcelId: 'parcel-ny', parcelName: 'Hudson Wood', timeZone: 'America/New_York' };
const auckland = { parcelId: 'parcel-akl', parcelName: 'Waitakere Edge', timeZone: 'Pacific/Auckland' };

const permit = (over: Partial<PermitFact> = {}): PermitFact => ({
  permitId: 'permit-1', ...newYork, startsOn: '2026-01-01', endsOn: '2027-12-31', as: 'holder', clubName: null, ...over,
});

const facts = (over: Partial<ReminderFacts> = {}): ReminderFacts => ({ userId: 'user-fay', settings: { ...defaultReminderSettings }, permits: [], allowances: [], closures: [], ...over });

const keysAt = (f: ReminderFacts, iso: string) => dueReminders(f, new Date(iso)).map((r) => r.dedupeKey);

describe('dueReminders: a permit ends in 14 days', () => {
  const f = facts({ permits: [permit({ endsOn: '2026-11-15' })] });
  const key = 'reminder:permit-ending:permit-1:2026-11-15:user-fay';

  it('given a New York permit whose last day is 15 November, it is due through the whole of 1 November there (EDT midnight to EST midnight, 25 hours) and at no other time', () => {
    expect(keysAt(f, '2026-11-01T03:59:59Z')).toEqual([]); // 23:59:59 EDT, 31 October
    expect(keysAt(f, '2026-11-01T04:00:00Z')).toEqual([key]); // 00:00 EDT, 1 November
    expect(keysAt(f, '2026-11-02T04:59:59Z')).toEqual([key]); // 23:59:59 EST, still 1 November
    expect(keysAt(f, '2026-11-02T05:00:00Z')).toEqual([]); // 00:00 EST, 2 November
  });

  it('given runs every 15 minutes that day, every one names the same dedupe key, so one mail goes', () => {
    const keys = new Set<string>();
    for (let t = Date.parse('2026-11-01T04:00:00Z'); t < Date.parse('2026-11-02T05:00:00Z'); t += 15 * 60_000) for (const k of keysAt(f, new Date(t).toISOString())) keys.add(k);
    expect([...keys]).toEqual([key]);
  });

  it("given a club's permit, its steward is reminded and a plain member is not", () => {
    const club = { permitId: 'permit-club', endsOn: '2026-11-15', clubName: 'Valley Mycological Society' };
    expect(keysAt(facts({ permits: [permit({ ...club, as: 'steward' })] }), '2026-11-01T12:00:00Z')).toEqual(['reminder:permit-ending:permit-club:2026-11-15:user-fay']);
    expect(keysAt(facts({ permits: [permit({ ...club, as: 'member' })] }), '2026-11-01T12:00:00Z')).toEqual([]);
  });

  it('given the person switched permit reminders off, none is due', () => {
    expect(keysAt({ ...f, settings: { ...defaultReminderSettings, permitEnding: false } }, '2026-11-01T12:00:00Z')).toEqual([]);
  });
});

describe('dueReminders: a season opens tomorrow', () => {
  const f = facts({ permits: [permit()], allowances: [{ parcelId: newYork.parcelId, speciesName: 'Chaga', seasons: [{ start: '11-02', end: '12-15' }] }] });

  it('given a season from 2 November in New York, it is due on 1 November there, 04:00Z to 05:00Z the next day, naming the season’s last day', () => {
    expect(keysAt(f, '2026-11-01T03:59:59Z')).toEqual([]);
    const [due] = dueReminders(f, new Date('2026-11-02T04:59:59Z'));
    expect(due).toMatchObject({ kind: 'seasonOpening', opensOn: '2026-11-02', species: [{ name: 'Chaga', endsOn: '2026-12-15' }], dedupeKey: 'reminder:season-opening:parcel-ny:2026-11-02:user-fay' });
    expect(keysAt(f, '2026-11-02T05:00:00Z')).toEqual([]);
  });

  it('given a permit whose last day is today, the season opening tomorrow is not on land the person may use', () => {
    expect(keysAt({ ...f, permits: [permit({ endsOn: '2026-11-01' })] }, '2026-11-01T12:00:00Z')).toEqual([]);
  });

  it('given a season crossing New Year on an Auckland parcel, the one opening 1 January 2027 is due from 00:00 NZDT on 31 December (11:00Z on the 30th)', () => {
    const akl = facts({ permits: [permit({ ...auckland })], allowances: [{ parcelId: auckland.parcelId, speciesName: 'Puha', seasons: [{ start: '01-01', end: '03-31' }] }] });
    expect(keysAt(akl, '2026-12-30T10:59:59Z')).toEqual([]);
    expect(keysAt(akl, '2026-12-30T11:00:00Z')).toEqual(['reminder:season-opening:parcel-akl:2027-01-01:user-fay']);
  });

  it('given seasonOpening switched off, none is due', () => {
    expect(keysAt({ ...f, settings: { ...defaultReminderSettings, seasonOpening: false } }, '2026-11-01T12:00:00Z')).toEqual([]);
  });
});

describe('dueReminders: a closure starts tomorrow, across the date line', () => {
  const closure = (parcelId: string) => ({ closureId: `closure-${parcelId}`, parcelId, startsOn: '2026-12-10', endsOn: '2026-12-12', reason: 'Deer cull' });
  const f = facts({
    permits: [permit({ permitId: 'p-akl', ...auckland }), permit({ permitId: 'p-ny' })],
    closures: [closure(auckland.parcelId), closure(newYork.parcelId)],
  });

  it('given closures from 10 December in Auckland and New York, each is due on its own 9 December: Auckland from 11:00Z on the 8th, New York from 05:00Z on the 9th', () => {
    expect(keysAt(f, '2026-12-08T10:59:59Z')).toEqual([]);
    expect(keysAt(f, '2026-12-08T11:00:00Z')).toEqual(['reminder:closure-starting:closure-parcel-akl:2026-12-10:user-fay']);
    // 23:00 NZDT on the 9th in Auckland, 05:00 EST on the 9th in New York: both are due.
    expect(keysAt(f, '2026-12-09T10:00:00Z').sort()).toEqual(['reminder:closure-starting:closure-parcel-akl:2026-12-10:user-fay', 'reminder:closure-starting:closure-parcel-ny:2026-12-10:user-fay']);
    // 00:00 NZDT on the 10th: Auckland's has begun; New York's is still tomorrow (06:00 EST on the 9th).
    expect(keysAt(f, '2026-12-09T11:00:00Z')).toEqual(['reminder:closure-starting:closure-parcel-ny:2026-12-10:user-fay']);
    expect(keysAt(f, '2026-12-10T05:00:00Z')).toEqual([]);
  });
});

describe('digestWeek: a landowner’s Monday', () => {
  const ona = (timeZone: string, weeklyDigest = true) => ({ userId: 'user-ona', timeZone, settings: { ...defaultReminderSettings, weeklyDigest } });

  it('given New York, the Monday after the DST change (2 November 2026) begins at 05:00Z and covers 26 October to 1 November, 169 hours (the 25-hour Sunday included)', () => {
    expect(digestWeek(ona('America/New_York'), new Date('2026-11-02T04:59:59Z'))).toBeNull(); // 23:59:59 EST on Sunday
    const week = digestWeek(ona('America/New_York'), new Date('2026-11-02T05:00:00Z'));
    expect(week).toMatchObject({ from: '2026-10-26', to: '2026-11-01', dedupeKey: 'reminder:weekly-digest:user-ona:2026-11-02' });
    expect(week?.startsAt.toISOString()).toBe('2026-10-26T04:00:00.000Z'); // 00:00 EDT
    expect(week?.endsAt.toISOString()).toBe('2026-11-02T05:00:00.000Z'); // 00:00 EST
    expect(digestWeek(ona('America/New_York'), new Date('2026-11-03T04:59:59Z'))?.dedupeKey).toBe('reminder:weekly-digest:user-ona:2026-11-02'); // 23:59:59 EST, still Monday
    expect(digestWeek(ona('America/New_York'), new Date('2026-11-03T05:00:00Z'))).toBeNull();
  });

  it('given Auckland, its Monday 7 December 2026 runs from 11:00Z on Sunday the 6th (UTC) to 11:00Z on the 7th', () => {
    expect(digestWeek(ona('Pacific/Auckland'), new Date('2026-12-06T10:59:59Z'))).toBeNull();
    expect(digestWeek(ona('Pacific/Auckland'), new Date('2026-12-06T11:00:00Z'))).toMatchObject({ from: '2026-11-30', to: '2026-12-06', dedupeKey: 'reminder:weekly-digest:user-ona:2026-12-07' });
    expect(digestWeek(ona('Pacific/Auckland'), new Date('2026-12-07T11:00:00Z'))).toBeNull();
  });

  it('given the digest switched off, there is none on a Monday', () => {
    expect(digestWeek(ona('America/New_York', false), new Date('2026-11-02T12:00:00Z'))).toBeNull();
  });

  it('given parcels with nothing in the week, they are left out, and with none left there is nothing to send', () => {
    const quiet = { parcelId: 'q', parcelName: 'Quiet Lot', entries: 0, flags: 0, requests: 0 };
    expect(digestLines([quiet])).toEqual([]);
    expect(digestLines([quiet, { ...quiet, parcelId: 'b', parcelName: 'Busy Lot', requests: 1 }]).map((p) => p.parcelName)).toEqual(['Busy Lot']);
  });
});

describe('reminder mail', () => {
  it('given the local date 2 November 2026, it is written "Monday, November 2, 2026"', () => {
    expect(formatLongDate('2026-11-02')).toBe('Monday, November 2, 2026');
    expect(formatLongDate('2026-11-15')).toBe('Sunday, November 15, 2026');
  });

  it('given a permit ending, the mail says what, where, when in words, links to My permits, carries the safety line and where to turn these off', () => {
    const [due] = dueReminders(facts({ permits: [permit({ endsOn: '2026-11-15' })] }), new Date('2026-11-01T12:00:00Z'));
    if (!due) throw new Error('no reminder was due');
    const text = reminderText(reminderMail(due, 'https://tallywood.example'));
    expect(text).toContain('Your permit for Hudson Wood ends in 14 days');
    expect(text).toContain('Sunday, November 15, 2026');
    expect(text).toContain('https://tallywood.example/my-permits');
    expect(text).toContain('Identification is your responsibility');
    expect(text).toContain('Turn these off: https://tallywood.example/settings');
  });
});
