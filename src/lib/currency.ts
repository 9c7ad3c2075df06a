/**
 * Currencies and money as text. Pure: used by the server and by islands alike.
 *
 * Fillcard keeps every amount as an integer count of the currency's minor unit (cents, pence,
 * fils; yen have none), so how many minor units a currency has decides how an amount reads.
 * That number comes from ISO 4217 List One (the current currency and funds code list, "Minor
 * unit" column, published by SIX Financial Information as ISO's maintenance agency), not from the
 * browser: ECMA-402 says Intl.NumberFormat should use ISO 4217 minor units, but engines take
 * theirs from CLDR, which differs for some currencies (CLDR shows HUF, IDR and COP without
 * decimals and IQD without its three). So the digits are always passed to Intl explicitly.
 */

/** Currencies with no minor unit (ISO 4217 minor unit 0). */
const ZERO_DECIMAL = 'BIF CLP DJF GNF ISK JPY KMF KRW PYG RWF UGX UYI VND VUV XAF XOF XPF';
/** Currencies with three decimals (ISO 4217 minor unit 3). */
const THREE_DECIMAL = 'BHD IQD JOD KWD LYD OMR TND';
/** Units of account with four decimals (ISO 4217 minor unit 4). */
const FOUR_DECIMAL = 'CLF UYW';
/**
 * Everything else in List One has two. Some codes here have since been withdrawn (HRK, SLL, ZWL,
 * CUC, ANG); they stay so that amounts recorded in them still read. SLE, VED, XCG and ZWG are
 * later additions (from memory of the list's amendments, two decimals each). Precious metals,
 * bond units, XDR, XTS and XXX have no minor unit ("N.A.") and are left out on purpose.
 */
const TWO_DECIMAL = `AED AFN ALL AMD ANG AOA ARS AUD AWG AZN BAM BBD BDT BGN BMD BND BOB BOV BRL BSD
  BTN BWP BYN BZD CAD CDF CHE CHF CHW CNY COP COU CRC CUC CUP CVE CZK DKK DOP DZD EGP ERN ETB EUR
  FJD FKP GBP GEL GHS GIP GMD GTQ GYD HKD HNL HRK HTG HUF IDR ILS INR IRR JMD KES KGS KHR KPW KYD
  KZT LAK LBP LKR LRD LSL MAD MDL MGA MKD MMK MNT MOP MRU MUR MVR MWK MXN MXV MYR MZN NAD NGN NIO
  NOK NPR NZD PAB PEN PGK PHP PKR PLN QAR RON RSD RUB SAR SBD SCR SDG SEK SGD SHP SLE SLL SOS SRD
  SSP STN SVC SYP SZL THB TJS TMT TOP TRY TTD TWD TZS UAH USD USN UYU UZS VED VES WST XCD XCG YER
  ZAR ZMW ZWG ZWL`;

const MINOR_UNITS: ReadonlyMap<string, number> = new Map(
  (
    [
      [ZERO_DECIMAL, 0],
      [TWO_DECIMAL, 2],
      [THREE_DECIMAL, 3],
      [FOUR_DECIMAL, 4],
    ] as const
  ).flatMap(([codes, digits]) => codes.split(/\s+/).filter(Boolean).map((code) => [code, digits] as const)),
);

/**
 * Currencies offered in select boxes: widely used ones where ISO 4217 and the payment provider
 * count minor units the same way. Left out on purpose: three-decimal dinars (the provider wants
 * their last digit to be 0, which an exact tax amount often is not), ISK and MGA (the provider
 * counts them differently from ISO 4217, so an amount would be off by a factor of 100).
 */
export const SUPPORTED_CURRENCIES = [
  'EUR', 'USD', 'GBP', 'CHF', 'SEK', 'NOK', 'DKK', 'PLN', 'CZK', 'HUF', 'RON', 'CAD', 'AUD',
  'NZD', 'JPY', 'KRW', 'SGD', 'HKD', 'INR', 'ZAR', 'BRL', 'MXN', 'CLP', 'AED', 'ILS', 'TRY',
  'THB', 'MYR', 'PHP',
] as const;

export type SupportedCurrency = (typeof SUPPORTED_CURRENCIES)[number];

export class UnknownCurrencyError extends Error {
  constructor(readonly currency: string) {
    super(`Unknown currency code "${currency}": expected a current ISO 4217 code such as EUR, USD or JPY`);
    this.name = 'UnknownCurrencyError';
  }
}

/** A typed amount Fillcard cannot read; the message is written for the person who typed it. */
export class MoneyParseError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'MoneyParseError';
  }
}

function normaliseCode(code: string): string {
  // The payment provider sends codes in lower case; the database keeps them in upper case.
  const upper = typeof code === 'string' ? code.trim().toUpperCase() : '';
  if (!/^[A-Z]{3}$/.test(upper) || !MINOR_UNITS.has(upper)) throw new UnknownCurrencyError(String(code));
  return upper;
}

export function isCurrencyCode(code: string): boolean {
  return typeof code === 'string' && MINOR_UNITS.has(code.trim().toUpperCase());
}

export function isSupportedCurrency(code: string): code is SupportedCurrency {
  return (SUPPORTED_CURRENCIES as readonly string[]).includes(code);
}

/** How many decimal places the currency's minor unit has, per ISO 4217 (JPY 0, EUR 2, KWD 3). */
export function minorUnits(code: string): number {
  return MINOR_UNITS.get(normaliseCode(code))!;
}

function assertSafeInteger(value: number, what: string) {
  if (!Number.isSafeInteger(value)) {
    throw new RangeError(`${what} must be a whole number of minor units, got ${String(value)}`);
  }
}

/** "2550" → "25.50" for EUR; exact, no floating point on the way. */
function decimalText(minor: number, digits: number): string {
  const sign = minor < 0 ? '-' : '';
  const abs = String(Math.abs(minor));
  if (digits === 0) return sign + abs;
  const padded = abs.padStart(digits + 1, '0');
  return `${sign}${padded.slice(0, -digits)}.${padded.slice(-digits)}`;
}

/**
 * An amount as plain decimal text without grouping or symbol ("25.50", "9900", "14.963"), for form
 * fields; parseMoney reads it back unchanged.
 */
export function toDecimalText(minor: number, currency: string): string {
  assertSafeInteger(minor, 'Amount');
  return decimalText(minor, minorUnits(currency));
}

const formatters = new Map<string, Intl.NumberFormat>();

function formatter(locale: string, code: string, digits: number): Intl.NumberFormat {
  const key = `${locale}|${code}`;
  let f = formatters.get(key);
  if (!f) {
    f = new Intl.NumberFormat(locale, {
      style: 'currency',
      currency: code,
      minimumFractionDigits: digits,
      maximumFractionDigits: digits,
    });
    formatters.set(key, f);
  }
  return f;
}

/**
 * An amount in minor units as the locale writes money: formatMoney(2550, 'EUR') → "€25.50",
 * formatMoney(9900, 'JPY') → "JP¥9,900", formatMoney(14963, 'KWD') → "KWD 14.963" (en-GB).
 */
export function formatMoney(minor: number, currency: string, locale = 'en-GB'): string {
  assertSafeInteger(minor, 'Amount');
  const code = normaliseCode(currency);
  const digits = MINOR_UNITS.get(code)!;
  // A decimal string keeps the amount exact however large it is (ECMA-402 formats numeric strings
  // as exact decimals); dividing by 10^digits as a float would not.
  return formatter(locale, code, digits).format(decimalText(minor, digits) as `${number}`);
}

/**
 * What a person typed for a price, in minor units: "25.50" EUR → 2550, "3000" JPY → 3000,
 * "7.125" KWD → 7125. A comma is read as the decimal mark too ("25,50"), because many studios
 * write it so. Grouping marks, symbols, signs and more decimals than the currency has are refused
 * rather than guessed at: "1,000" in USD is refused, not read as one dollar.
 */
export function parseMoney(text: string, currency: string): number {
  const code = normaliseCode(currency);
  const digits = MINOR_UNITS.get(code)!;
  const example = digits === 0 ? '2500' : `25.${'5'.padEnd(digits, '0')}`;
  const input = typeof text === 'string' ? text.trim() : '';
  if (input === '') throw new MoneyParseError('Enter an amount.');
  if (/^-/.test(input)) throw new MoneyParseError('The amount must not be negative.');
  const match = /^(\d+)(?:[.,](\d+))?$/.exec(input);
  if (!match) throw new MoneyParseError(`"${input}" is not an amount in ${code}; type it like ${example}.`);
  const [, whole, fraction = ''] = match;
  if (fraction.length > digits && input.includes(',')) {
    throw new MoneyParseError(`"${input}" reads as more decimals than ${code} has; leave out thousands separators and type it like ${example}.`);
  }
  if (fraction.length > digits) {
    throw new MoneyParseError(
      digits === 0
        ? `${code} has no minor unit; type a whole number like ${example}.`
        : `${code} has ${digits} decimal places; "${input}" has ${fraction.length}.`,
    );
  }
  const minor = BigInt(whole) * 10n ** BigInt(digits) + BigInt(fraction.padEnd(digits, '0') || '0');
  if (minor > BigInt(Number.MAX_SAFE_INTEGER)) throw new MoneyParseError(`"${input}" is too large an amount.`);
  return Number(minor);
}

/** The currency's name in the given language, for labels ("EUR — Euro"). */
export function currencyName(code: string, locale = 'en-GB'): string {
  const upper = normaliseCode(code);
  return new Intl.DisplayNames([locale], { type: 'currency' }).of(upper) ?? upper;
}
