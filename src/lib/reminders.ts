import { addDays, currentSeason, localDateAt, startOfLocalDay } from './field/time';
import type { SeasonWindow } from './seasons';

/**
 * Reminder e-mails (issue 14): which are due for one person at `now`, each with the key that sends it
 * once however often the job runs. "Tomorrow" and "in 14 days" are each parcel's own local dates in
 * its IANA zone, never the UTC date. Pure: the job loads the facts and sends.
 */

export const reminderKinds = ['permitEnding', 'seasonOpening', 'closureStarting', 'weeklyDigest'] as const;
export type ReminderKind = (typeof reminderKinds)[number];
export type ReminderSettings = Record<ReminderKind, boolean>;

/** Without a row of their own a person gets every kind. */
export const defaultReminderSettings: ReminderSettings = { permitEnding: true, seasonOpening: true, closureStarting: true, weeklyDigest: true };

/** The kinds about permits a person holds or uses, and the landowner's own. */
export const permitReminderKinds: ReminderKind[] = ['permitEnding', 'seasonOpening', 'closureStarting'];
export const landownerReminderKinds: ReminderKind[] = ['weeklyDigest'];

/** How many local days before its last day a permit's holder is told it ends. */
export const permitEndingLeadDays = 14;

/**
 * A permit the person may use or answers for: their own (`holder`), or their club's (`steward` or
 * `member`). Only approved and active permits are facts; the others give no access.
 */
export type PermitFact = {
  permitId: string;
  parcelId: string;
  parcelName: string;
  timeZone: string;
  startsOn: string;
  endsOn: string;
  as: 'holder' | 'steward' | 'member';
  clubName: string | null;
};

export type AllowanceFact = { parcelId: string; speciesName: string; seasons: SeasonWindow[] };
export type ClosureFact = { closureId: string; parcelId: string; startsOn: string; endsOn: string; reason: string };

export type ReminderFacts = {
  userId: string;
  settings: ReminderSettings;
  permits: PermitFact[];
  allowances: AllowanceFact[];
  closures: ClosureFact[];
};

type Place = { parcelId: string; parcelName: string; timeZone: string };

export type Reminder =
  | (Place & { kind: 'permitEnding'; dedupeKey: string; permitId: string; endsOn: string; clubName: string | null })
  | (Place & { kind: 'seasonOpening'; dedupeKey: string; opensOn: string; species: { name: string; endsOn: string }[] })
  | (Place & { kind: 'closureStarting'; dedupeKey: string; closureId: string; startsOn: string; endsOn: string; reason: string });

/** The reminders due for one person at `now`, those they switched off left out, in a stable order. */
export function dueReminders(facts: ReminderFacts, now: Date): Reminder[] {
  const due: Reminder[] = [];
  const { userId, settings } = facts;

  if (settings.permitEnding) {
    for (const p of facts.permits) {
      if (p.as === 'member') continue; // a club's stewards answer for its permits
      const today = localDateAt(now, p.timeZone);
      if (p.endsOn !== addDays(today, permitEndingLeadDays)) continue;
      due.push({
        kind: 'permitEnding', parcelId: p.parcelId, parcelName: p.parcelName, timeZone: p.timeZone, permitId: p.permitId, endsOn: p.endsOn, clubName: p.clubName,
        dedupeKey: `reminder:permit-ending:${p.permitId}:${p.endsOn}:${userId}`,
      });
    }
  }

  // Land the person may use tomorrow: a permit of theirs or their club's that covers the parcel's next local day.
  const usable = new Map<string, Place & { tomorrow: string }>();
  for (const p of facts.permits) {
    const tomorrow = addDays(localDateAt(now, p.timeZone), 1);
    if (p.startsOn <= tomorrow && tomorrow <= p.endsOn && !usable.has(p.parcelId)) {
      usable.set(p.parcelId, { parcelId: p.parcelId, parcelName: p.parcelName, timeZone: p.timeZone, tomorrow });
    }
  }

  for (const place of [...usable.values()].sort((a, b) => a.parcelName.localeCompare(b.parcelName))) {
    const { tomorrow, ...where } = place;
    if (settings.seasonOpening) {
      const species = facts.allowances
        .filter((a) => a.parcelId === place.parcelId)
        .flatMap((a) => {
          const season = a.seasons.length > 0 ? currentSeason(a.seasons, tomorrow) : null;
          return season && season.start === tomorrow ? [{ name: a.speciesName, endsOn: season.end }] : [];
        })
        .sort((a, b) => a.name.localeCompare(b.name));
      if (species.length > 0) {
        due.push({ kind: 'seasonOpening', ...where, opensOn: tomorrow, species, dedupeKey: `reminder:season-opening:${place.parcelId}:${tomorrow}:${userId}` });
      }
    }
    if (settings.closureStarting) {
      for (const c of facts.closures) {
        if (c.parcelId !== place.parcelId || c.startsOn !== tomorrow) continue;
        due.push({
          kind: 'closureStarting', ...where, closureId: c.closureId, startsOn: c.startsOn, endsOn: c.endsOn, reason: c.reason,
          dedupeKey: `reminder:closure-starting:${c.closureId}:${c.startsOn}:${userId}`,
        });
      }
    }
  }
  return due;
}

/**
 * The week a landowner's digest covers, when one is due at `now`: on a Monday in the zone of their
 * first parcel, the seven local dates before it (Monday to Sunday) and the instants they span there
 * (a DST week is an hour longer or shorter). Null on any other day or when switched off. One key per
 * landowner and Monday, so it is sent once however often the job runs.
 */
export function digestWeek({ userId, timeZone, settings }: { userId: string; timeZone: string; settings: ReminderSettings }, now: Date) {
  if (!settings.weeklyDigest) return null;
  const today = localDateAt(now, timeZone);
  if (new Date(`${today}T00:00:00Z`).getUTCDay() !== 1) return null;
  const from = addDays(today, -7);
  return {
    from, to: addDays(today, -1), timeZone,
    startsAt: startOfLocalDay(from, timeZone), endsAt: startOfLocalDay(today, timeZone),
    dedupeKey: `reminder:weekly-digest:${userId}:${today}`,
  };
}

export type DigestWeek = NonNullable<ReturnType<typeof digestWeek>>;

/** What happened on one parcel in the week: entries recorded, flags raised, access requests made. */
export type DigestParcel = { parcelId: string; parcelName: string; entries: number; flags: number; requests: number };

/** The parcels worth telling about, by name; none means no digest is sent. */
export function digestLines(parcels: DigestParcel[]): DigestParcel[] {
  return parcels.filter((p) => p.entries + p.flags + p.requests > 0).sort((a, b) => a.parcelName.localeCompare(b.parcelName));
}
