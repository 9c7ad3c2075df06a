import type { ReactNode } from 'react';
import type { FieldErrors } from 'react-hook-form';
import { minorUnits } from '../../lib/currency';

/** A radio choice drawn as a chip, with the focus ring on the chip when the radio has keyboard focus. */
export const CHOICE =
  'inline-flex min-h-[44px] cursor-pointer items-center gap-2 rounded-card border border-paper-edge bg-white px-3 py-2 has-[:checked]:border-clay has-[:checked]:bg-clay-light/30 has-[:focus-visible]:outline has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-clay';

/** One labelled field: its control, an optional hint and the error, tied together by ids for screen readers. */
export function Field({ id, label, hint, error, className, children }: { id: string; label: string; hint?: ReactNode; error?: string; className?: string; children: ReactNode }) {
  return (
    <div className={className}>
      <label className="label" htmlFor={id}>
        {label}
      </label>
      {children}
      {hint ? (
        <p id={`${id}-hint`} className="mt-1 text-caption text-ink-faint">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} className="mt-1 text-caption font-semibold text-ember">
          {error}
        </p>
      ) : null}
    </div>
  );
}

/** A field with its unit (currency, %) shown after it; screen readers get the unit from the field's hint. */
export function WithUnit({ unit, children }: { unit: string; children: ReactNode }) {
  return (
    <div className="flex">
      {children}
      <span className="inline-flex items-center rounded-r-card border border-l-0 border-paper-edge bg-paper-deep px-3 text-ink-soft" aria-hidden="true">
        {unit}
      </span>
    </div>
  );
}

/** Every message in a nested error object, by its dotted path ("client.email"). */
export function flattenErrors(errors: FieldErrors, prefix = ''): [string, string][] {
  const out: [string, string][] = [];
  for (const [key, value] of Object.entries(errors ?? {})) {
    if (!value || typeof value !== 'object') continue;
    const path = prefix ? `${prefix}.${key}` : key;
    if (typeof (value as { message?: unknown }).message === 'string') out.push([path, (value as { message: string }).message]);
    else out.push(...flattenErrors(value as FieldErrors, path));
  }
  return out;
}

/** Decimal places of a currency for hints, falling back to 2 while a code is being chosen. */
export function safeMinorUnits(currency: string): number {
  try {
    return minorUnits(currency);
  } catch {
    return 2;
  }
}
