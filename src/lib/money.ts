/**
 * Money a person types, read exactly into integer minor units (cents), never through binary
 * floating point. The rules follow how amounts are commonly written in en-US:
 *
 * - "12.5" is $12.50 (1250 cents); "12" is $12.00; ".99" and "0.99" are 99 cents.
 * - A leading "$" and spaces around the amount are ignored.
 * - Commas group thousands only where a reader would put them: "1,000.00" is 100000 cents;
 *   "1,00" or "10,0" are refused (in some countries the comma is the decimal mark, so guessing
 *   could charge a hundred times too much).
 * - More decimals than the currency has ("12.505" in dollars) are refused, not rounded: the
 *   person decides what the fee is.
 * - An empty field is no fee (0).
 */

/** How many decimals a currency's minor unit has (ISO 4217, as Intl knows it): usd 2, jpy 0. */
export function currencyDigits(currency: string): number {
  try {
    return new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() }).resolvedOptions().maximumFractionDigits ?? 2;
  } catch {
    return 2;
  }
}

export type ParsedAmount = { ok: true; minor: number } | { ok: false; message: string };

/** The largest fee Tallywood takes: $100,000.00. */
export const maxFeeMinor = 10_000_000;

const amountPattern = /^(\d{1,3}(?:,\d{3})+|\d+)?(?:\.(\d*))?$/;

/** "12.50" → 1250 (usd). A sentence a person can act on when the text is not an amount. */
export function parseMoneyAmount(text: string, currency = 'usd'): ParsedAmount {
  const digits = currencyDigits(currency);
  const unit = currency.toLowerCase() === 'usd' ? 'dollars' : currency.toUpperCase();
  const example = digits === 0 ? '1500' : `12.${'5'.padEnd(digits, '0')}`;
  const trimmed = text.trim().replace(/^\$\s*/, '');
  if (trimmed === '') return { ok: true, minor: 0 };
  if (trimmed.startsWith('-')) return { ok: false, message: 'A fee cannot be negative; enter 0 for no fee.' };
  const match = amountPattern.exec(trimmed);
  if (!match || (match[1] === undefined && !match[2])) {
    return { ok: false, message: `Enter the fee in ${unit}, like ${example} (or 0 for no fee).` };
  }
  const whole = (match[1] ?? '0').replace(/,/g, '');
  const fraction = match[2] ?? '';
  if (fraction.length > digits) {
    return {
      ok: false,
      message: digits === 0 ? `${currency.toUpperCase()} has no smaller unit; enter a whole amount, like ${example}.` : `Give at most ${digits} digits after the decimal point (whole cents), like ${example}.`,
    };
  }
  if (whole.length > 12) return { ok: false, message: 'That fee is too large; the most Tallywood takes is $100,000.00.' };
  // Both parts are digit strings short enough to be exact as numbers; the sum is an integer.
  const minor = Number(whole) * 10 ** digits + Number(fraction.padEnd(digits, '0') || '0');
  if (minor > maxFeeMinor) return { ok: false, message: 'That fee is too large; the most Tallywood takes is $100,000.00.' };
  return { ok: true, minor };
}
