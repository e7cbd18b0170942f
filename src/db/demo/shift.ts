import { addDays } from '../../lib/field/time';
import type { Demo } from './seed-demo';

/**
 * The demo never goes stale: its files are written as if today were their anchor date
 * (`scenario.json` → `writtenAsOf`), and the loader moves every date, instant and season window by
 * the days between that anchor and the day it loads (on the demo parcels' own calendar). A demo
 * loaded next spring tells the same story, the same number of days before and after "today".
 */

/** Whole days from one calendar date to another. */
export function daysBetween(from: string, to: string): number {
  return Math.round((Date.parse(`${to}T00:00:00Z`) - Date.parse(`${from}T00:00:00Z`)) / 86_400_000);
}

/**
 * A yearly month-day moved by whole days, read in the anchor's year: windows and the visits inside
 * them move together, so a visit stays inside its window (the demo's visits sit days inside theirs,
 * so a 29 February between them never pushes one out; the loader checks it).
 */
export function shiftMonthDay(monthDay: string, days: number, anchorYear: number): string {
  return addDays(`${String(anchorYear).padStart(4, '0')}-${monthDay}`, days).slice(5);
}

/** A season window moved by whole days; a window open all year stays open all year. */
export function shiftWindow(window: { start: string; end: string }, days: number, anchorYear: number): { start: string; end: string } {
  if (window.start === '01-01' && window.end === '12-31') return window;
  return { start: shiftMonthDay(window.start, days, anchorYear), end: shiftMonthDay(window.end, days, anchorYear) };
}

/** An instant moved by whole days of 24 hours. */
export const shiftInstant = (iso: string, days: number): string => new Date(Date.parse(iso) + days * 86_400_000).toISOString();

/** The demo with every date moved by `days`. */
export function shiftDemo(demo: Demo, days: number): Demo {
  if (days === 0) return demo;
  const date = (d: string) => addDays(d, days);
  const year = Number(demo.scenario.writtenAsOf.slice(0, 4));
  const { scenario } = demo;
  return {
    ...demo,
    clubs: demo.clubs.map((c) => ({ ...c, members: c.members.map((m) => ({ ...m, joinedOn: date(m.joinedOn) })) })),
    scenario: {
      ...scenario,
      writtenAsOf: date(scenario.writtenAsOf),
      landownersVerifiedAt: shiftInstant(scenario.landownersVerifiedAt, days),
      closures: scenario.closures.map((c) => ({ ...c, startsOn: date(c.startsOn), endsOn: date(c.endsOn) })),
      terms: scenario.terms.map((t) => ({ ...t, publishedOn: date(t.publishedOn) })),
      allowances: scenario.allowances.map((a) => ({ ...a, seasons: a.seasons.map((w) => shiftWindow(w, days, year)) })),
      permits: scenario.permits.map((p) => ({
        ...p, startsOn: date(p.startsOn), endsOn: date(p.endsOn), history: p.history.map((h) => ({ ...h, at: shiftInstant(h.at, days) })),
      })),
      visits: scenario.visits.map((v) => ({ ...v, localDate: date(v.localDate) })),
    },
  };
}
