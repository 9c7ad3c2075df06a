import { describe, expect, it } from 'vitest';
import {
  currencyName,
  formatMoney,
  isCurrencyCode,
  minorUnits,
  MoneyParseError,
  parseMoney,
  SUPPORTED_CURRENCIES,
  toDecimalText,
  UnknownCurrencyError,
} from '@/lib/currency';

/** ECMA-402 Intl.NumberFormat, told the digits explicitly; the reference formatter. */
function intl(locale: string, currency: string, digits: number) {
  return new Intl.NumberFormat(locale, {
    style: 'currency',
    currency,
    minimumFractionDigits: digits,
    maximumFractionDigits: digits,
  });
}

describe('minorUnits: ISO 4217 List One, "Minor unit" column', () => {
  it.each([
    // Values as published in ISO 4217 List One.
    ['JPY', 0], ['KRW', 0], ['CLP', 0], ['VND', 0], ['ISK', 0], ['XOF', 0], ['UGX', 0],
    ['EUR', 2], ['USD', 2], ['GBP', 2], ['CHF', 2], ['HUF', 2], ['IDR', 2], ['COP', 2], ['MGA', 2],
    ['KWD', 3], ['BHD', 3], ['JOD', 3], ['OMR', 3], ['TND', 3], ['IQD', 3], ['LYD', 3],
    ['CLF', 4],
  ])('ISO 4217: %s has %i', (code, digits) => {
    expect(minorUnits(code)).toBe(digits);
  });

  it('reads codes in either case, as the payment provider sends them in lower case', () => {
    expect(minorUnits('eur')).toBe(2);
    expect(minorUnits('jpy')).toBe(0);
    expect(isCurrencyCode('kwd')).toBe(true);
  });

  it.each(['XYZ', 'EURO', 'EU', '', '€', 'XAU', 'XXX', 'XTS'])('refuses %j (not a currency with a minor unit in ISO 4217)', (code) => {
    expect(() => minorUnits(code)).toThrow(UnknownCurrencyError);
    expect(isCurrencyCode(code)).toBe(false);
  });
});

describe('formatMoney against ECMA-402 Intl.NumberFormat with ISO 4217 minor units', () => {
  const locales = ['en-GB', 'en-US', 'de-DE', 'fr-CH', 'ja-JP', 'ar-KW'];

  it('matches Intl.NumberFormat for every supported currency in several locales', () => {
    for (const currency of SUPPORTED_CURRENCIES) {
      const digits = minorUnits(currency);
      for (const locale of locales) {
        for (const minor of [0, 1, 99, 2550, 123456, 98765432]) {
          // The reference is fed the amount in major units (minor / 10^digits) by Intl itself.
          expect(formatMoney(minor, currency, locale)).toBe(intl(locale, currency, digits).format(minor / 10 ** digits));
        }
      }
    }
  });

  it('shows the ISO 4217 decimals where the engine\u2019s own default (from CLDR) would drop them', () => {
    // ISO 4217 gives HUF 2 and IQD 3; this engine's Intl default gives 0 for both, which would
    // hide minor units an amount holds. formatMoney keeps ISO's.
    const hufDefault = new Intl.NumberFormat('en-GB', { style: 'currency', currency: 'HUF' }).resolvedOptions();
    expect(formatMoney(123456, 'HUF')).toBe(intl('en-GB', 'HUF', 2).format(1234.56));
    expect(formatMoney(123456, 'HUF')).toContain('1,234.56');
    expect(formatMoney(12345, 'IQD')).toContain('12.345');
    // Only meaningful while the engine disagrees; it documents why the digits are passed.
    if (hufDefault.maximumFractionDigits !== 2) {
      expect(new Intl.NumberFormat('en-GB', { style: 'currency', currency: 'HUF' }).format(1234.56)).not.toContain('.56');
    }
  });

  it('agrees with the engine default for the supported currencies where CLDR and ISO 4217 agree', () => {
    const disagree: string[] = [];
    for (const currency of SUPPORTED_CURRENCIES) {
      const engine = new Intl.NumberFormat('en-GB', { style: 'currency', currency });
      if (engine.resolvedOptions().maximumFractionDigits !== minorUnits(currency)) {
        disagree.push(currency);
        continue;
      }
      expect(formatMoney(2550, currency)).toBe(engine.format(2550 / 10 ** minorUnits(currency)));
    }
    // HUF is the one supported currency where this engine's CLDR data shows no decimals.
    expect(disagree.every((c) => c === 'HUF')).toBe(true);
  });

  it('worked examples in en-GB: €25.50, JPY 9,900, KWD 14.963 (ISO 4217: EUR 2, JPY 0, KWD 3)', () => {
    // 2550 cents = 25.50 euros; 9900 yen = 9900 yen; 14 963 fils = 14.963 dinars
    expect(formatMoney(2550, 'EUR')).toBe(intl('en-GB', 'EUR', 2).format(25.5));
    expect(formatMoney(2550, 'EUR')).toContain('25.50');
    expect(formatMoney(9900, 'JPY')).toBe(intl('en-GB', 'JPY', 0).format(9900));
    expect(formatMoney(9900, 'JPY')).toContain('9,900');
    expect(formatMoney(14963, 'KWD')).toBe(intl('en-GB', 'KWD', 3).format(14.963));
    expect(formatMoney(14963, 'KWD')).toContain('14.963');
    expect(formatMoney(2550, 'EUR', 'de-DE')).toBe(intl('de-DE', 'EUR', 2).format(25.5));
    expect(formatMoney(2550, 'EUR', 'de-DE')).toContain('25,50');
  });

  it('keeps the largest safe amount exact: 9 007 199 254 740 991 cents = 90 071 992 547 409.91', () => {
    expect(formatMoney(Number.MAX_SAFE_INTEGER, 'EUR')).toContain('90,071,992,547,409.91');
  });

  it('formats negative amounts (refunds) with the locale\u2019s minus sign', () => {
    expect(formatMoney(-2550, 'EUR')).toBe(intl('en-GB', 'EUR', 2).format(-25.5));
  });

  it('refuses amounts that are not whole minor units', () => {
    expect(() => formatMoney(25.5, 'EUR')).toThrow(RangeError);
    expect(() => formatMoney(Number.NaN, 'EUR')).toThrow(RangeError);
    expect(() => formatMoney(2550, 'ABC')).toThrow(UnknownCurrencyError);
  });
});

describe('parseMoney', () => {
  it.each([
    // [typed, currency, minor units, working]
    ['25.50', 'EUR', 2550, '25 × 100 + 50'],
    ['25.5', 'EUR', 2550, '25 × 100 + 50'],
    ['25,50', 'EUR', 2550, 'comma as the decimal mark'],
    ['25', 'EUR', 2500, '25 × 100'],
    [' 12.30 ', 'GBP', 1230, 'surrounding spaces ignored'],
    ['0.01', 'USD', 1, 'one cent'],
    ['3000', 'JPY', 3000, 'yen have no minor unit'],
    ['7.125', 'KWD', 7125, '7 × 1000 + 125'],
    ['0.001', 'KWD', 1, 'one fils'],
    ['7.1', 'KWD', 7100, '7 × 1000 + 100'],
    ['90071992547409.91', 'EUR', Number.MAX_SAFE_INTEGER, 'the largest safe amount'],
  ])('"%s" %s → %i (%s)', (typed, currency, expected) => {
    expect(parseMoney(typed, currency)).toBe(expected);
  });

  it.each([
    ['25.505', 'EUR', /2 decimal places/],
    ['10.5', 'JPY', /no minor unit/],
    ['7.1255', 'KWD', /3 decimal places/],
    ['1,000', 'USD', /thousands separators/],
    ['1 000', 'EUR', /not an amount/],
    ['-5', 'EUR', /negative/],
    ['€5', 'EUR', /not an amount/],
    ['5e3', 'EUR', /not an amount/],
    ['0x10', 'EUR', /not an amount/],
    ['Infinity', 'EUR', /not an amount/],
    ['.5', 'EUR', /not an amount/],
    ['', 'EUR', /Enter an amount/],
    ['90071992547409.92', 'EUR', /too large/],
  ])('refuses "%s" in %s', (typed, currency, message) => {
    expect(() => parseMoney(typed, currency)).toThrow(MoneyParseError);
    expect(() => parseMoney(typed, currency)).toThrow(message);
  });

  it('reads back what toDecimalText writes, for every supported currency', () => {
    for (const currency of SUPPORTED_CURRENCIES) {
      for (const minor of [0, 1, 9, 10, 99, 100, 2550, 123456789]) {
        expect(parseMoney(toDecimalText(minor, currency), currency)).toBe(minor);
      }
    }
    // hand-checked: 5 cents → "0.05", 14 963 fils → "14.963", 9900 yen → "9900"
    expect(toDecimalText(5, 'EUR')).toBe('0.05');
    expect(toDecimalText(14963, 'KWD')).toBe('14.963');
    expect(toDecimalText(9900, 'JPY')).toBe('9900');
  });
});

describe('SUPPORTED_CURRENCIES', () => {
  it('lists distinct ISO 4217 codes with 0 or 2 decimals only', () => {
    expect(new Set(SUPPORTED_CURRENCIES).size).toBe(SUPPORTED_CURRENCIES.length);
    for (const code of SUPPORTED_CURRENCIES) {
      expect(isCurrencyCode(code)).toBe(true);
      expect([0, 2]).toContain(minorUnits(code));
    }
    expect(SUPPORTED_CURRENCIES).toContain('EUR');
    expect(SUPPORTED_CURRENCIES).not.toContain('KWD');
    expect(SUPPORTED_CURRENCIES).not.toContain('ISK');
  });

  it('each has a name for labels (ECMA-402 Intl.DisplayNames)', () => {
    for (const code of SUPPORTED_CURRENCIES) {
      expect(currencyName(code)).toBe(new Intl.DisplayNames(['en-GB'], { type: 'currency' }).of(code));
      expect(currencyName(code)).not.toBe(code);
    }
  });
});
