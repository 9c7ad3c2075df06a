import { priceExtras } from '../../lib/pricing';
import { formatMoney } from '../../lib/currency';
import type { GalleryTerms } from '../../lib/schemas/picks';

/** The running count and what extras cost, in words; the same numbers the studio will charge. */
export function tallyWords(picked: number, terms: GalleryTerms) {
  const price = priceExtras({ picks: picked, allowance: terms.allowance, unitPriceMinor: terms.extraPriceMinor, taxRateBp: terms.taxRateBp, taxMode: terms.taxMode });
  const money = (minor: number) => formatMoney(minor, terms.currency);
  const count = `${picked} picked of ${terms.allowance} included`;
  let extras: string;
  let tax = '';
  if (price.extras === 0) {
    const left = terms.allowance - picked;
    extras = left > 0 ? `${left} more ${left === 1 ? 'is' : 'are'} included at no extra cost` : 'All included retouches are picked';
  } else {
    const amount = price.extras * terms.extraPriceMinor;
    extras = `${price.extras} extra × ${money(terms.extraPriceMinor)} = ${money(amount)}`;
    if (terms.taxRateBp === 0) tax = 'No tax is added.';
    else if (terms.taxMode === 'inclusive') tax = `Tax included (${money(price.taxMinor)}).`;
    else tax = `Plus ${money(price.taxMinor)} tax: ${money(price.totalMinor)} in all.`;
  }
  return { price, count, extras, tax };
}

interface Props {
  picked: number;
  terms: GalleryTerms;
  /** Compact: one line for the phone's bottom bar. */
  compact?: boolean;
  /** The extras are paid: the sum is history, not a debt. */
  paid?: boolean;
}

/** The tally, announced politely to screen readers as it changes. */
export default function PickTally({ picked, terms, compact, paid }: Props) {
  const t = tallyWords(picked, terms);
  const over = t.price.extras > 0;
  return (
    <div aria-live="polite" aria-atomic="true" className="min-w-0" data-testid="pick-tally">
      <p className="font-semibold leading-tight">
        <span className="font-display text-lead tabular-nums text-brand">{picked}</span>
        <span className="text-ink-soft"> picked of </span>
        <span className="tabular-nums">{terms.allowance}</span>
        <span className="text-ink-soft"> included</span>
      </p>
      <p className={`text-caption ${over ? 'text-ink' : 'text-ink-soft'} ${compact ? 'leading-snug' : ''}`}>
        {t.extras}{over ? '.' : ''}
        {over && t.tax && !paid ? <> {t.tax}</> : null}
        {over && paid ? <> <span className="font-semibold text-moss">Paid.</span></> : null}
      </p>
    </div>
  );
}
