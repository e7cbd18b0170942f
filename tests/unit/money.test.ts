import { describe, expect, it } from 'vitest';
import { currencyDigits, parseMoneyAmount } from '../../src/lib/money';

/*
 * Fees as a person types them, read into cents. The cases are how en-US writes money (a point
 * before the cents, commas between thousands) and ISO 4217's minor units (USD has 2 decimals,
 * JPY 0; from memory ✱). Expected cents are worked by hand: dollars × 100.
 */
const cents = (text: string, currency?: string) => {
  const parsed = parseMoneyAmount(text, currency);
  return parsed.ok ? parsed.minor : parsed.message;
};

describe('parseMoneyAmount', () => {
  it('given "12.50", it is 1250 cents', () => expect(cents('12.50')).toBe(1250));
  it('given "12.5", one decimal, it is 1250 cents, as a till reads it', () => expect(cents('12.5')).toBe(1250));
  it('given "12", a whole amount, it is 1200 cents', () => expect(cents('12')).toBe(1200));
  it('given "0.99" and ".99", both are 99 cents', () => {
    expect(cents('0.99')).toBe(99);
    expect(cents('.99')).toBe(99);
  });
  it('given "12." with a trailing point, it is 1200 cents', () => expect(cents('12.')).toBe(1200));
  it('given "0.1" and "0.2", which binary floating point cannot hold, they are exactly 10 and 20 cents', () => {
    expect(cents('0.1')).toBe(10);
    expect(cents('0.2')).toBe(20);
    // 1.15 × 100 is 114.99999999999999 in binary floating point; read as digits it is 115.
    expect(cents('1.15')).toBe(115);
  });
  it('given "1,000.00" with a thousands comma, it is 100000 cents', () => expect(cents('1,000.00')).toBe(100_000));
  it('given "$25" and " 25.00 ", the dollar sign and spaces are ignored', () => {
    expect(cents('$25')).toBe(2500);
    expect(cents(' 25.00 ')).toBe(2500);
  });
  it('given an empty field or "0", there is no fee', () => {
    expect(cents('')).toBe(0);
    expect(cents('0')).toBe(0);
  });
  it('given "12.505", three decimals of a dollar, it refuses with a sentence about whole cents rather than rounding', () => {
    expect(cents('12.505')).toBe('Give at most 2 digits after the decimal point (whole cents), like 12.50.');
  });
  it('given "abc", it asks for dollars with an example', () => {
    expect(cents('abc')).toBe('Enter the fee in dollars, like 12.50 (or 0 for no fee).');
  });
  it('given "1,00" or "10,0", where the comma may be a decimal mark, it refuses instead of guessing', () => {
    expect(typeof cents('1,00')).toBe('string');
    expect(typeof cents('10,0')).toBe('string');
    expect(typeof cents('1,0000')).toBe('string');
  });
  it('given "-5", it says a fee cannot be negative', () => expect(cents('-5')).toMatch(/cannot be negative/));
  it('given "1e3" or "12.50 USD", it refuses', () => {
    expect(typeof cents('1e3')).toBe('string');
    expect(typeof cents('12.50 USD')).toBe('string');
  });
  it('given $100,000.00 it accepts 10000000 cents; a cent more is too large', () => {
    expect(cents('100,000.00')).toBe(10_000_000);
    expect(cents('100000.01')).toMatch(/too large/);
  });
  it('given yen, which has no minor unit (ISO 4217 ✱), "1500" is 1500 and "1500.5" is refused', () => {
    expect(currencyDigits('jpy')).toBe(0);
    expect(cents('1500', 'jpy')).toBe(1500);
    expect(typeof cents('1500.5', 'jpy')).toBe('string');
  });
});
