/** A yearly window, month-day to month-day inclusive. */
export type SeasonWindow = { start: string; end: string };

/** 'MM-DD' of a 'YYYY-MM-DD' local date. */
export const monthDayOf = (isoDate: string) => isoDate.slice(5);

/**
 * Whether a yearly window holds a local date. Both ends are included; a window whose end comes
 * before its start crosses New Year (11-01 … 03-15 holds 12-25 and 02-10).
 */
export function inSeason(window: SeasonWindow, isoDate: string): boolean {
  const day = monthDayOf(isoDate);
  return window.start <= window.end ? day >= window.start && day <= window.end : day >= window.start || day <= window.end;
}

export function closedOn<C extends { startsOn: string; endsOn: string }>(closures: C[], isoDate: string): C | null {
  return closures.find((c) => c.startsOn <= isoDate && isoDate <= c.endsOn) ?? null;
}

/** One line for a parcel list: closed today, or how many allowed species are in season. */
export function seasonSummary({ seasons, closures }: { seasons: SeasonWindow[][]; closures: { startsOn: string; endsOn: string; reason: string }[] }, today: string) {
  const closure = closedOn(closures, today);
  if (closure) return `closed today (${closure.reason})`;
  if (seasons.length === 0) return 'no species allowed yet';
  const open = seasons.filter((windows) => windows.some((w) => inSeason(w, today))).length;
  return `${open} of ${seasons.length} species in season`;
}
