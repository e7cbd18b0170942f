/**
 * Words for the verdict's sentences. Intl formatters are built once and kept: building one costs
 * far more than using it, and a field pack answers many check-ins.
 */

const dayFormat = new Intl.DateTimeFormat('en-US', { timeZone: 'UTC', year: 'numeric', month: 'short', day: 'numeric' });
const kmFormat = new Intl.NumberFormat('en-US', { maximumFractionDigits: 1 });

/** "Dec 31, 2026" from '2026-12-31' (the same words as formatDate in src/lib/format.ts). */
export function formatDay(isoDate: string): string {
  const [y, m, d] = isoDate.split('-').map(Number);
  return dayFormat.format(new Date(Date.UTC(y ?? 1970, (m ?? 1) - 1, d ?? 1)));
}

/** "about 12 m", "about 1.4 km", "less than 1 m". */
export function formatDistance(metres: number): string {
  if (metres < 1) return 'less than 1 m';
  if (metres < 1000) return `about ${Math.round(metres)} m`;
  return `about ${kmFormat.format(metres / 1000)} km`;
}

/** "12 m": an accuracy radius as the device reported it, to the metre. */
export const formatMetres = (metres: number) => `${Math.round(metres)} m`;

/** "a, b or c" / "a, b and c". */
export function joinWords(items: string[], last: 'or' | 'and'): string {
  return items.length > 1 ? `${items.slice(0, -1).join(', ')} ${last} ${items.at(-1)}` : (items[0] ?? '');
}
