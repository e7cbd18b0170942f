import { addDays, addYears, localDateAt, seasonOccurrencesBetween } from './field/time';
import { formatDate } from './format';
import { formatSeasonWindows } from './tally-words';

/**
 * The events of a person's calendar feed (issue 14), as plain facts: each one a whole-day span of
 * the parcel's own calendar (local dates, RFC 5545 §3.3.4 DATE values, which carry no time and so no
 * offset: a season opening on 2026-11-01 in America/New_York is the date 20261101, DST change or not).
 * The feed writer (src/server/calendar-feed.ts) turns them into iCalendar text.
 */
export type CalendarEvent = {
  /** Stable per thing, so a calendar app updates the event instead of adding another (RFC 5545 §3.8.4.7). */
  uid: string;
  /** The first local date, 'YYYY-MM-DD'. */
  firstDay: string;
  /** The last local date, included (the feed writes DTEND as the day after, exclusive). */
  lastDay: string;
  summary: string;
  description: string;
  location: string;
  /** The parcel's IANA time zone, whose calendar the dates are on. */
  timeZone: string;
};

export type FeedPermit = {
  id: string;
  state: string;
  startsOn: string;
  endsOn: string;
  parcelId: string;
  parcelName: string;
  timeZone: string;
  clubName: string | null;
};

/** A permit on the person's own land, as its landowner sees it: who holds it. */
export type FeedGrant = FeedPermit & { holderName: string | null };

export type FeedParcel = {
  id: string;
  name: string;
  timeZone: string;
  closures: { startsOn: string; endsOn: string; reason: string }[];
  allowances: { speciesId: string; commonName: string; seasons: { start: string; end: string }[] }[];
};

/** The standing caution (src/components/SafetyNote.astro), on every event. */
export const feedSafetyNote =
  'Identification is your responsibility. Tallywood records where you may harvest and how much; it does not identify anything. ' +
  'Never eat a wild mushroom or plant unless you are certain what it is, and learn its toxic lookalikes. ' +
  "Local law, codes and the landowner's terms come first.";

/** Permits whose window a calendar shows: granted ones, in force or over. Requested, declined and revoked ones are not windows. */
const shownStates = new Set(['approved', 'active', 'expired']);

const withNote = (...lines: string[]) => [...lines, '', feedSafetyNote].join('\n');

function permitEvent(permit: FeedPermit, species: string[]): CalendarEvent {
  const holder = permit.clubName ? `through ${permit.clubName}` : 'personal';
  return {
    uid: `permit-${permit.id}@tallywood`,
    firstDay: permit.startsOn,
    lastDay: permit.endsOn,
    summary: `Permit: ${permit.parcelName}`,
    description: withNote(
      `Your permit on ${permit.parcelName} (${holder}, ${permit.state}), ${formatDate(permit.startsOn)} – ${formatDate(permit.endsOn)} on the parcel's calendar.`,
      species.length ? `Species allowed: ${species.join(', ')}.` : 'See My permits for what may be taken.',
    ),
    location: permit.parcelName,
    timeZone: permit.timeZone,
  };
}

function grantEvent(grant: FeedGrant): CalendarEvent {
  const holder = grant.clubName ?? grant.holderName ?? 'A forager';
  return {
    uid: `granted-${grant.id}@tallywood`,
    firstDay: grant.startsOn,
    lastDay: grant.endsOn,
    summary: `Permit on your land: ${holder}, ${grant.parcelName}`,
    description: withNote(
      `${holder} may harvest on ${grant.parcelName} (${grant.clubName ? 'a club permit' : 'a personal permit'}, ${grant.state}), ${formatDate(grant.startsOn)} – ${formatDate(grant.endsOn)} on the parcel's calendar.`,
      'Their entries and running totals are on the parcel\'s Tallies page.',
    ),
    location: grant.parcelName,
    timeZone: grant.timeZone,
  };
}

function seasonEvents(parcel: FeedParcel, from: string, until: string): CalendarEvent[] {
  return parcel.allowances.flatMap((allowance) =>
    seasonOccurrencesBetween(allowance.seasons, from, until).flatMap((occurrence) => {
      const season = `${formatDate(occurrence.start)} – ${formatDate(occurrence.end)}`;
      const base = { location: parcel.name, timeZone: parcel.timeZone };
      const events: CalendarEvent[] = [];
      if (from <= occurrence.start && occurrence.start <= until) {
        events.push({
          ...base,
          uid: `season-opens-${parcel.id}-${allowance.speciesId}-${occurrence.start}@tallywood`,
          firstDay: occurrence.start,
          lastDay: occurrence.start,
          summary: `Season opens: ${allowance.commonName} on ${parcel.name}`,
          description: withNote(`The season for ${allowance.commonName} on ${parcel.name} opens today: ${season} (every year ${formatSeasonWindows(allowance.seasons)}).`),
        });
      }
      if (from <= occurrence.end && occurrence.end <= until) {
        events.push({
          ...base,
          uid: `season-closes-${parcel.id}-${allowance.speciesId}-${occurrence.start}@tallywood`,
          firstDay: occurrence.end,
          lastDay: occurrence.end,
          summary: `Season closes: ${allowance.commonName} on ${parcel.name}`,
          description: withNote(`Last day of the season for ${allowance.commonName} on ${parcel.name}: ${season}.`),
        });
      }
      return events;
    }),
  );
}

function closureEvents(parcel: FeedParcel, from: string, until: string): CalendarEvent[] {
  return parcel.closures
    .filter((c) => c.endsOn >= from && c.startsOn <= until)
    .map((c) => ({
      uid: `closure-${parcel.id}-${c.startsOn}-${c.endsOn}@tallywood`,
      firstDay: c.startsOn,
      lastDay: c.endsOn,
      summary: `Closed: ${parcel.name}`,
      description: withNote(`${parcel.name} is closed ${formatDate(c.startsOn)} – ${formatDate(c.endsOn)}: ${c.reason}. Nothing may be harvested there.`),
      location: parcel.name,
      timeZone: parcel.timeZone,
    }));
}

/**
 * A person's feed: their permits' windows (their own and their clubs'), and on the parcels they may
 * use, each season's opening and closing day and each closure within the next twelve months, counted
 * from the parcel's own today. A landowner's feed also has, on their own parcels, the windows of the
 * permits they granted and the same season days and closures. A parcel both owned and used is listed once.
 */
export function buildCalendarEvents({ permits, parcels, grants = [], ownParcels = [], now }: {
  permits: FeedPermit[];
  parcels: FeedParcel[];
  grants?: FeedGrant[];
  ownParcels?: FeedParcel[];
  now: Date;
}): CalendarEvent[] {
  const speciesOn = new Map(parcels.map((p) => [p.id, p.allowances.map((a) => a.commonName)]));
  const permitEvents = permits.filter((p) => shownStates.has(p.state)).map((p) => permitEvent(p, speciesOn.get(p.parcelId) ?? []));
  const grantEvents = grants.filter((g) => shownStates.has(g.state)).map(grantEvent);
  const everyParcel = [...parcels, ...ownParcels.filter((own) => !parcels.some((p) => p.id === own.id))];
  const parcelEvents = everyParcel.flatMap((parcel) => {
    const today = localDateAt(now, parcel.timeZone);
    const until = addDays(addYears(today, 1), -1);
    return [...seasonEvents(parcel, today, until), ...closureEvents(parcel, today, until)];
  });
  return [...permitEvents, ...grantEvents, ...parcelEvents].sort((a, b) => (a.firstDay < b.firstDay ? -1 : a.firstDay > b.firstDay ? 1 : a.uid < b.uid ? -1 : 1));
}
