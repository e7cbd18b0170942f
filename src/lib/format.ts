/** International acre: 43 560 ft² with the 1959 foot (0.3048 m) = 4046.8564224 m², exactly. */
export const squareMetresPerAcre = 4046.8564224;

export function formatArea(squareMetres: number) {
  const hectares = squareMetres / 10_000;
  const acres = squareMetres / squareMetresPerAcre;
  // Small areas keep two decimals so that a garden-sized zone does not read as "0 ha".
  const digits = hectares < 10 ? 2 : 1;
  return `${hectares.toLocaleString('en-US', { maximumFractionDigits: digits })} ha (${acres.toLocaleString('en-US', { maximumFractionDigits: digits })} acres)`;
}

/** Integer minor units and an ISO 4217 code, e.g. (2500, 'usd') → "$25.00". */
export function formatMoney(minor: number, currency: string) {
  const code = currency.toUpperCase();
  const digits = new Intl.NumberFormat('en-US', { style: 'currency', currency: code }).resolvedOptions().maximumFractionDigits ?? 2;
  return new Intl.NumberFormat('en-US', { style: 'currency', currency: code }).format(minor / 10 ** digits);
}

export function formatDate(isoDate: string) {
  const [y, m, d] = isoDate.split('-').map(Number);
  return new Date(Date.UTC(y ?? 1970, (m ?? 1) - 1, d ?? 1)).toLocaleDateString('en-US', { timeZone: 'UTC', year: 'numeric', month: 'short', day: 'numeric' });
}

const instantFormats = new Map<string, Intl.DateTimeFormat>();

/** "Nov 14, 2026, 10:32 AM EST": an instant on a parcel's clock, with its zone named. */
export function formatInstantIn(iso: string | Date, timeZone: string): string {
  let format = instantFormats.get(timeZone);
  if (!format) {
    format = new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: 'short', day: 'numeric', hour: 'numeric', minute: '2-digit', timeZoneName: 'short' });
    instantFormats.set(timeZone, format);
  }
  return format.format(typeof iso === 'string' ? new Date(iso) : iso);
}
