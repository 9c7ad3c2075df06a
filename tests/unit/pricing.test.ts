import { describe, expect, it } from 'vitest';
import { divideRounded, priceExtras, PricingInputError, type PriceExtrasInput } from '@/lib/pricing';
import { formatMoney, minorUnits } from '@/lib/currency';

/**
 * Worked examples: every expected figure is worked out by hand in the comment beside it, with the
 * one rounding rule (nearest minor unit, exact halves away from zero). Displayed totals are checked
 * against ECMA-402 Intl.NumberFormat fed the hand-computed amount in major units, with the
 * currency's ISO 4217 minor units.
 */
function intl(currency: string, major: number, locale = 'en-GB') {
  const digits = minorUnits(currency);
  return new Intl.NumberFormat(locale, {
    style: 'currency',
    currency,
    minimumFractionDigits: digits,
    maximumFractionDigits: digits,
  }).format(major);
}

const base: Omit<PriceExtrasInput, 'picks' | 'allowance' | 'unitPriceMinor'> = { taxRateBp: 0, taxMode: 'exclusive' };

describe('priceExtras: worked examples (computed by hand)', () => {
  it('JPY, tax exclusive 10 %, no minor unit (ISO 4217: JPY 0)', () => {
    // extras = 13 − 10 = 3; net = 3 × 3000 = 9000 yen
    // tax = 9000 × 1000 / 10000 = 900 (exact); total = 9000 + 900 = 9900 yen
    const r = priceExtras({ picks: 13, allowance: 10, unitPriceMinor: 3000, taxRateBp: 1000, taxMode: 'exclusive' });
    expect(r).toEqual({ extras: 3, netMinor: 9000, taxMinor: 900, totalMinor: 9900 });
    expect(formatMoney(r.totalMinor, 'JPY')).toBe(intl('JPY', 9900));
  });

  it('JPY, tax inclusive 10 %', () => {
    // total = 3 × 3000 = 9000 yen
    // net = 9000 × 10000 / 11000 = 90 000 000 / 11 000 = 8181.81… → 8182 (11 000 × 8181 = 89 991 000, remainder 9000 > half of 11 000)
    // tax = 9000 − 8182 = 818
    const r = priceExtras({ picks: 13, allowance: 10, unitPriceMinor: 3000, taxRateBp: 1000, taxMode: 'inclusive' });
    expect(r).toEqual({ extras: 3, netMinor: 8182, taxMinor: 818, totalMinor: 9000 });
  });

  it('EUR, tax exclusive 19 %', () => {
    // extras = 12 − 10 = 2; net = 2 × 2500 = 5000 cents
    // tax = 5000 × 1900 / 10000 = 950 (exact); total = 5950 cents = €59.50
    const r = priceExtras({ picks: 12, allowance: 10, unitPriceMinor: 2500, taxRateBp: 1900, taxMode: 'exclusive' });
    expect(r).toEqual({ extras: 2, netMinor: 5000, taxMinor: 950, totalMinor: 5950 });
    expect(formatMoney(r.totalMinor, 'EUR')).toBe(intl('EUR', 59.5));
  });

  it('EUR, tax inclusive 20 %', () => {
    // total = 3 × 2500 = 7500 cents
    // net = 7500 × 10000 / 12000 = 6250 (exact); tax = 7500 − 6250 = 1250
    const r = priceExtras({ picks: 13, allowance: 10, unitPriceMinor: 2500, taxRateBp: 2000, taxMode: 'inclusive' });
    expect(r).toEqual({ extras: 3, netMinor: 6250, taxMinor: 1250, totalMinor: 7500 });
    expect(formatMoney(r.netMinor, 'EUR')).toBe(intl('EUR', 62.5));
  });

  it('USD, tax exclusive 5 %: an exact half cent rounds away from zero', () => {
    // extras = 7 − 5 = 2; net = 2 × 1565 = 3130 cents
    // tax = 3130 × 500 / 10000 = 1 565 000 / 10 000 = 156.5 → 157 (half away from zero;
    // rounding half to even or truncating would give 156); total = 3130 + 157 = 3287 = $32.87
    const r = priceExtras({ picks: 7, allowance: 5, unitPriceMinor: 1565, taxRateBp: 500, taxMode: 'exclusive' });
    expect(r).toEqual({ extras: 2, netMinor: 3130, taxMinor: 157, totalMinor: 3287 });
    expect(formatMoney(r.totalMinor, 'USD')).toBe(intl('USD', 32.87));
  });

  it('USD, tax inclusive 20 %: an exact half cent of net rounds away from zero', () => {
    // total = 3 × 501 = 1503 cents
    // net = 1503 × 10000 / 12000 = 15 030 000 / 12 000 = 1252.5 → 1253 (half to even would give 1252)
    // tax = 1503 − 1253 = 250
    const r = priceExtras({ picks: 4, allowance: 1, unitPriceMinor: 501, taxRateBp: 2000, taxMode: 'inclusive' });
    expect(r).toEqual({ extras: 3, netMinor: 1253, taxMinor: 250, totalMinor: 1503 });
  });

  it('KWD, tax exclusive 5 %, three decimals (ISO 4217: KWD 3)', () => {
    // extras = 4 − 2 = 2; net = 2 × 7125 = 14 250 fils (14.250 KWD)
    // tax = 14 250 × 500 / 10 000 = 7 125 000 / 10 000 = 712.5 → 713 fils; total = 14 963 fils = 14.963 KWD
    const r = priceExtras({ picks: 4, allowance: 2, unitPriceMinor: 7125, taxRateBp: 500, taxMode: 'exclusive' });
    expect(r).toEqual({ extras: 2, netMinor: 14250, taxMinor: 713, totalMinor: 14963 });
    expect(formatMoney(r.totalMinor, 'KWD')).toBe(intl('KWD', 14.963));
  });

  it('KWD, tax inclusive 15 %', () => {
    // total = 1 × 7125 = 7125 fils
    // net = 7125 × 10000 / 11500 = 71 250 000 / 11 500 = 6195.65… → 6196
    //   (11 500 × 6195 = 71 242 500, remainder 7500 > 5750)
    // tax = 7125 − 6196 = 929 fils
    const r = priceExtras({ picks: 11, allowance: 10, unitPriceMinor: 7125, taxRateBp: 1500, taxMode: 'inclusive' });
    expect(r).toEqual({ extras: 1, netMinor: 6196, taxMinor: 929, totalMinor: 7125 });
    expect(formatMoney(r.taxMinor, 'KWD')).toBe(intl('KWD', 0.929));
  });

  it('no extras when picks stay within the allowance', () => {
    // 8 picks of 10 included → 0 extras, everything 0, whatever the price and rate
    expect(priceExtras({ picks: 8, allowance: 10, unitPriceMinor: 2500, taxRateBp: 2000, taxMode: 'exclusive' })).toEqual({
      extras: 0, netMinor: 0, taxMinor: 0, totalMinor: 0,
    });
    // exactly the allowance → still 0
    expect(priceExtras({ picks: 10, allowance: 10, unitPriceMinor: 2500, taxRateBp: 2000, taxMode: 'inclusive' })).toEqual({
      extras: 0, netMinor: 0, taxMinor: 0, totalMinor: 0,
    });
  });

  it('a zero rate adds no tax in either mode', () => {
    // 2 extras × 2500 = 5000; tax 0; net = total = 5000
    for (const taxMode of ['exclusive', 'inclusive'] as const) {
      expect(priceExtras({ picks: 3, allowance: 1, unitPriceMinor: 2500, taxRateBp: 0, taxMode })).toEqual({
        extras: 2, netMinor: 5000, taxMinor: 0, totalMinor: 5000,
      });
    }
  });

  it('stays exact past the range where floating point would lose cents', () => {
    // net = 1 × 900 719 925 474 099; tax at 25 % = 900 719 925 474 099 / 4 = 225 179 981 368 524.75 → …525
    // (net × rate = 2 251 799 813 685 247 500 is far above 2^53, where a float cannot hold it)
    const r = priceExtras({ picks: 1, allowance: 0, unitPriceMinor: 900_719_925_474_099, taxRateBp: 2500, taxMode: 'exclusive' });
    expect(r.taxMinor).toBe(225_179_981_368_525);
    expect(r.totalMinor).toBe(900_719_925_474_099 + 225_179_981_368_525);
  });
});

describe('priceExtras: invariants', () => {
  it('net + tax equals total, and tax is never negative, across prices and rates', () => {
    for (const taxMode of ['exclusive', 'inclusive'] as const) {
      for (const taxRateBp of [0, 1, 250, 700, 1900, 2000, 2500, 10000]) {
        for (const unitPriceMinor of [0, 1, 99, 501, 1565, 2500, 7125, 123457]) {
          for (const picks of [0, 3, 11, 57]) {
            const r = priceExtras({ picks, allowance: 3, unitPriceMinor, taxRateBp, taxMode });
            expect(r.netMinor + r.taxMinor).toBe(r.totalMinor);
            expect(r.taxMinor).toBeGreaterThanOrEqual(0);
            expect(r.extras).toBe(Math.max(0, picks - 3));
            if (taxMode === 'inclusive') expect(r.totalMinor).toBe(r.extras * unitPriceMinor);
            else expect(r.netMinor).toBe(r.extras * unitPriceMinor);
          }
        }
      }
    }
  });
});

describe('priceExtras: refuses bad input', () => {
  const ok: PriceExtrasInput = { ...base, picks: 12, allowance: 10, unitPriceMinor: 2500 };
  it.each([
    ['picks', { picks: 2.5 }],
    ['picks', { picks: -1 }],
    ['picks', { picks: Number.NaN }],
    ['allowance', { allowance: -3 }],
    ['allowance', { allowance: 1.5 }],
    ['unitPriceMinor', { unitPriceMinor: 25.5 }],
    ['unitPriceMinor', { unitPriceMinor: -100 }],
    ['unitPriceMinor', { unitPriceMinor: Number.POSITIVE_INFINITY }],
    ['taxRateBp', { taxRateBp: 19.5 }],
    ['taxRateBp', { taxRateBp: -1 }],
    ['taxRateBp', { taxRateBp: 10001 }],
    ['taxMode', { taxMode: 'gross' }],
  ])('%s: %j', (field, patch) => {
    expect(() => priceExtras({ ...ok, ...(patch as Partial<PriceExtrasInput>) })).toThrow(PricingInputError);
    expect(() => priceExtras({ ...ok, ...(patch as Partial<PriceExtrasInput>) })).toThrow(field);
  });

  it('a number passed as text is refused, not coerced', () => {
    expect(() => priceExtras({ ...ok, picks: '12' as unknown as number })).toThrow(PricingInputError);
  });

  it('a total beyond safe integers is refused', () => {
    expect(() => priceExtras({ ...ok, picks: 1001, allowance: 1, unitPriceMinor: 9_007_199_254_741 })).toThrow(/too large/);
  });
});

describe('divideRounded (nearest, halves away from zero, integers only)', () => {
  it.each([
    // [numerator, denominator, expected, hand working]
    [5n, 2n, 3n, '2.5 → 3'],
    [-5n, 2n, -3n, '−2.5 → −3'],
    [7n, 2n, 4n, '3.5 → 4'],
    [1n, 3n, 0n, '0.33 → 0'],
    [2n, 3n, 1n, '0.67 → 1'],
    [1_565_000n, 10_000n, 157n, '156.5 → 157'],
    [15_030_000n, 12_000n, 1253n, '1252.5 → 1253'],
    [0n, 7n, 0n, '0 → 0'],
  ])('%s / %s = %s (%s)', (n, d, expected) => {
    expect(divideRounded(n, d)).toBe(expected);
  });

  it('refuses a zero or negative denominator', () => {
    expect(() => divideRounded(1n, 0n)).toThrow(RangeError);
    expect(() => divideRounded(1n, -2n)).toThrow(RangeError);
  });
});
