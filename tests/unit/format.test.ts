import { describe, expect, it } from 'vitest';
import { formatArea, formatMoney, squareMetresPerAcre } from '../../src/lib/format';

describe('formatArea', () => {
  it('given the international acre, it holds 4046.8564224 m² exactly (REFERENCES §1 ⚙: 43 560 ft² at 0.3048 m)', () => {
    expect(squareMetresPerAcre).toBe(4046.8564224);
  });

  it('given 40 acres, it shows 16.2 ha and 40 acres (REFERENCES §1 ⚙: 40 acres = 16.1874256896 ha)', () => {
    expect(formatArea(161_874.256896)).toBe('16.2 ha (40 acres)');
  });

  it('given one hectare, it shows 1 ha and 2.47 acres (1 ha = 10 000 m², SI Brochure from memory ✱; acre REFERENCES §1 ⚙)', () => {
    // 10 000 / 4046.8564224 = 2.4710538… acres; under 10 ha two decimals are kept.
    expect(formatArea(10_000)).toBe('1 ha (2.47 acres)');
  });

  it('given a garden-sized 500 m² zone, it does not read as 0 ha', () => {
    // 500 / 4046.8564224 = 0.12355… acres
    expect(formatArea(500)).toBe('0.05 ha (0.12 acres)');
  });

  it('given 12 345.06 international acres, it shows 12,345.1 acres, which a US survey acre would show as 12,345', () => {
    // 12 345.06 × 4046.8564224 = 49 958 685.345913344 m², exact decimal product (REFERENCES §1 ⚙).
    // With the US survey acre 4046.87260987425 m² (REFERENCES §1 ⚙) the same area is 12 345.0106 acres,
    // and with a rounded 4047 m² it is 12 344.6: only the exact international acre gives 12,345.1.
    expect(formatArea(49_958_685.345913344)).toBe('4,995.9 ha (12,345.1 acres)');
  });

  it('given the REFERENCES parcel-sized ring, it shows 87.6 ha and 216.5 acres (REFERENCES §2 ⚙: 876 163.448 m²)', () => {
    expect(formatArea(876_163.448)).toBe('87.6 ha (216.5 acres)');
  });
});

describe('formatMoney', () => {
  it('given 2500 US cents, it shows $25.00 (USD has 2 minor digits, ISO 4217, from memory ✱)', () => {
    expect(formatMoney(2500, 'usd')).toBe('$25.00');
  });

  it('given odd cents and thousands, it shows them to the cent with a thousands separator (ISO 4217, from memory ✱)', () => {
    expect(formatMoney(1, 'USD')).toBe('$0.01');
    expect(formatMoney(123_456, 'USD')).toBe('$1,234.56');
    expect(formatMoney(0, 'USD')).toBe('$0.00');
  });

  it('given 1500 yen, it shows ¥1,500, not ¥15 (JPY has 0 minor digits, ISO 4217, from memory ✱)', () => {
    expect(formatMoney(1500, 'jpy')).toBe('¥1,500');
  });

  it('given 1234 fils, it shows 1.234 dinars (KWD has 3 minor digits, ISO 4217, from memory ✱)', () => {
    expect(formatMoney(1234, 'KWD')).toMatch(/^KWD\s1\.234$/);
  });
});
