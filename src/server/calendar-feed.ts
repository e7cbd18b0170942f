import { createHash, randomBytes } from 'node:crypto';
import { getVtimezoneComponent } from '@touch4it/ical-timezones';
import ical, { ICalEventTransparency } from 'ical-generator';
import type { Executor } from '../db/client';
import { findFeedOwner, listOwnParcelsForCalendar } from '../db/calendar-feeds.queries';
import { loadUsableParcelFacts } from '../db/field.queries';
import { listPermitsForForager, listPermitsOnOwnersLand } from '../db/permits.queries';
import { addDays } from '../lib/field/time';
import { buildCalendarEvents, type CalendarEvent } from '../lib/calendar-events';

/** A new feed token: 32 random bytes, base64url (RFC 4648 §5), and the SHA-256 the table keeps of it. */
export function newFeedToken(): { token: string; tokenHash: string } {
  const token = randomBytes(32).toString('base64url');
  return { token, tokenHash: hashFeedToken(token) };
}

export const hashFeedToken = (token: string) => createHash('sha256').update(token, 'utf8').digest('hex');

/** A token as the address carries it: 43 base64url characters (32 bytes, no padding). */
export const feedTokenPattern = /^[A-Za-z0-9_-]{43}$/;

/** The feed's addresses for a token: over https, and the same as webcal:, which opens a calendar app to subscribe. */
export function feedAddresses(origin: string, token: string): { url: string; webcal: string } {
  const url = new URL(`/api/calendar/${token}.ics`, origin).toString();
  return { url, webcal: url.replace(/^https?:/, 'webcal:') };
}

/** A local date as the Date ical-generator writes as that same DATE: midnight UTC, written with UTC getters when no zone is set. */
const utcMidnight = (isoDate: string) => new Date(`${isoDate}T00:00:00Z`);

/**
 * The events as an iCalendar document (RFC 5545), with a VTIMEZONE for each parcel's zone.
 * Whole-day events are DATE values (DTSTART;VALUE=DATE, DTEND the day after, exclusive, §3.6.1),
 * which may not carry a TZID (§3.2.19), so ical-generator is given no zone for them (it would read a
 * native Date in the server's own zone); the zones' VTIMEZONE blocks, from @touch4it/ical-timezones,
 * go in after the calendar's own properties, where ical-generator puts the ones it makes (§3.6.5).
 */
export function renderCalendar(events: CalendarEvent[], now: Date): string {
  const calendar = ical({ name: 'Tallywood', prodId: { company: 'Tallywood', product: 'Calendar feed', language: 'EN' }, ttl: 60 * 60 * 6 });
  for (const event of events) {
    calendar.createEvent({
      id: event.uid,
      allDay: true,
      start: utcMidnight(event.firstDay),
      end: utcMidnight(addDays(event.lastDay, 1)),
      stamp: now,
      summary: event.summary,
      description: event.description,
      location: event.location,
      transparency: ICalEventTransparency.TRANSPARENT,
      x: { 'X-TALLYWOOD-TIME-ZONE': event.timeZone },
    });
  }
  const text = calendar.toString();
  const zones = [...new Set(events.map((e) => e.timeZone))].sort();
  const blocks = zones
    .map((zone) => getVtimezoneComponent(zone))
    .filter((block): block is string => typeof block === 'string' && block.length > 0)
    .map((block) => `${block.replace(/\r?\n/g, '\r\n').trim()}\r\n`)
    .join('');
  const at = text.search(/\r\nBEGIN:VEVENT\r\n|\r\nEND:VCALENDAR/);
  return at < 0 ? text : `${text.slice(0, at + 2)}${blocks}${text.slice(at + 2)}`;
}

/**
 * The feed a token opens, or null for an unknown or revoked token. Every query is scoped to the
 * feed's owner: their permits and their clubs', the parcels they may use under them, and the
 * parcels they own with the permits granted there.
 */
export async function loadCalendarFeed(db: Executor, { token, now = new Date() }: { token: string; now?: Date }): Promise<string | null> {
  if (!feedTokenPattern.test(token)) return null;
  const forager = await findFeedOwner(db, { tokenHash: hashFeedToken(token) });
  if (!forager) return null;
  const [permits, usable, grants, ownParcels] = await Promise.all([
    listPermitsForForager(db, { userId: forager.id, clubIds: forager.clubIds }),
    loadUsableParcelFacts(db, { forager, limit: 500 }),
    listPermitsOnOwnersLand(db, { ownerId: forager.id }),
    listOwnParcelsForCalendar(db, { ownerId: forager.id }),
  ]);
  return renderCalendar(buildCalendarEvents({ permits, parcels: usable.parcels, grants, ownParcels, now }), now);
}
