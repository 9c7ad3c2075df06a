/**
 * The price of extra retouches: one module for the server (orders, checkout) and the UI (the
 * "picked N of allowance" summary), so the figure a client sees is the figure they pay.
 *
 * Rounding rule, the only one Fillcard uses: all amounts are integers in the currency's minor unit;
 * every division (tax from a rate in basis points, net out of a tax-inclusive price) is rounded
 * once, to the nearest minor unit, with exact halves rounded away from zero (156.5 → 157), using
 * integer arithmetic only (BigInt), never floating point. The other amounts follow by addition or
 * subtraction, so net + tax = total always holds exactly.
 *
 * Fillcard computes; the studio stays responsible for its local tax rules (rate, whether prices
 * are shown with or without tax, how an invoice must show them).
 */

export type TaxMode = 'exclusive' | 'inclusive';

export interface PriceExtrasInput {
  /** Frames the client picked. */
  picks: number;
  /** Retouches the shoot's package includes. */
  allowance: number;
  /** Price of one extra retouch, in minor units; with tax on top (exclusive) or tax included (inclusive). */
  unitPriceMinor: number;
  /** Tax rate in basis points: 2000 = 20 %. */
  taxRateBp: number;
  taxMode: TaxMode;
}

export interface PriceExtrasResult {
  /** Picks beyond the allowance: the retouches the client pays for. */
  extras: number;
  netMinor: number;
  taxMinor: number;
  totalMinor: number;
}

/** An input no price can be computed from; the message names the field. */
export class PricingInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PricingInputError';
  }
}

const BP_PER_WHOLE = 10_000n;
/** The schema allows rates up to 100 %; a higher one is surely a typing slip. */
export const MAX_TAX_RATE_BP = 10_000;

function wholeNumber(value: unknown, field: string): bigint {
  if (typeof value !== 'number' || !Number.isSafeInteger(value)) {
    throw new PricingInputError(`${field} must be a whole number, got ${String(value)}`);
  }
  if (value < 0) throw new PricingInputError(`${field} must not be negative, got ${value}`);
  return BigInt(value);
}

/**
 * numerator / denominator rounded to the nearest integer, exact halves away from zero.
 * Integer-only: floor((2·|n| + d) / 2d) with the sign put back.
 */
export function divideRounded(numerator: bigint, denominator: bigint): bigint {
  if (denominator <= 0n) throw new RangeError('denominator must be positive');
  const negative = numerator < 0n;
  const abs = negative ? -numerator : numerator;
  const q = (2n * abs + denominator) / (2n * denominator);
  return negative ? -q : q;
}

function toSafeNumber(value: bigint, field: string): number {
  if (value > BigInt(Number.MAX_SAFE_INTEGER)) throw new PricingInputError(`${field} is too large to price`);
  return Number(value);
}

export function priceExtras(input: PriceExtrasInput): PriceExtrasResult {
  const picks = wholeNumber(input.picks, 'picks');
  const allowance = wholeNumber(input.allowance, 'allowance');
  const unit = wholeNumber(input.unitPriceMinor, 'unitPriceMinor');
  const rate = wholeNumber(input.taxRateBp, 'taxRateBp');
  if (rate > BigInt(MAX_TAX_RATE_BP)) {
    throw new PricingInputError(`taxRateBp must be at most ${MAX_TAX_RATE_BP} (100 %), got ${input.taxRateBp}`);
  }
  if (input.taxMode !== 'exclusive' && input.taxMode !== 'inclusive') {
    throw new PricingInputError(`taxMode must be "exclusive" or "inclusive", got ${String(input.taxMode)}`);
  }

  const extras = picks > allowance ? picks - allowance : 0n;
  const amount = extras * unit;

  let net: bigint;
  let tax: bigint;
  let total: bigint;
  if (input.taxMode === 'exclusive') {
    net = amount;
    tax = divideRounded(net * rate, BP_PER_WHOLE);
    total = net + tax;
  } else {
    total = amount;
    net = divideRounded(amount * BP_PER_WHOLE, BP_PER_WHOLE + rate);
    tax = total - net;
  }

  return {
    extras: toSafeNumber(extras, 'extras'),
    netMinor: toSafeNumber(net, 'net amount'),
    taxMinor: toSafeNumber(tax, 'tax'),
    totalMinor: toSafeNumber(total, 'total'),
  };
}
