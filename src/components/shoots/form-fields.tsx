import type { ReactNode } from 'react';
import type { FieldErrors } from 'react-hook-form';
import { currencyName, minorUnits } from '../../lib/currency';

/** A radio choice drawn as a chip, with the focus ring on the chip when the radio has keyboard focus. */
export const CHOICE =
  'inline-flex min-h-[44px] cursor-pointer items-center gap-2 rounded-card border border-paper-edge bg-white px-3 py-2 has-[:checked]:border-clay has-[:checked]:bg-clay-light/30 has-[:focus-visible]:outline has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-clay';

/** One card of a form: a fieldset whose legend (for screen readers) is also its visible heading. */
export function FormSection({ title, children }: { title: string; children: ReactNode }) {
  return (
    <fieldset className="card p-5 sm:p-6">
      <legend className="sr-only">{title}</legend>
      <h2 className="text-title">{title}</h2>
      {children}
    </fieldset>
  );
}

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

type TermsField = 'allowance' | 'extraPrice' | 'currency' | 'taxRate';

/**
 * The package terms as the new-shoot and Details forms both ask for them: retouches included, price
 * per extra retouch, currency, tax rate and whether prices include tax. Each form passes its own
 * field wiring (`input`, `fieldProps`) and the tax-mode radio's registration.
 */
export function PackageTermsFields({ ids, currency, currencies, input, fieldProps, taxModeProps }: {
  ids: string;
  currency: string;
  currencies: readonly string[];
  input: (name: TermsField, hint?: boolean) => object;
  fieldProps: (name: TermsField) => { id: string; error?: string };
  taxModeProps: object;
}) {
  const digits = safeMinorUnits(currency);
  return (
    <>
      <div className="mt-4 grid gap-4 sm:grid-cols-3">
        <Field {...fieldProps('allowance')} label="Retouches included" hint="The allowance: picks up to this number cost nothing extra.">
          <input className="field" inputMode="numeric" {...input('allowance', true)} />
        </Field>
        <Field {...fieldProps('extraPrice')} label="Price per extra retouch" hint={digits === 0 ? `In whole ${currency}, e.g. 3000.` : `In ${currency}, e.g. 25.${'0'.repeat(digits)}.`}>
          <WithUnit unit={currency}>
            <input className="field rounded-r-none" inputMode="decimal" {...input('extraPrice', true)} />
          </WithUnit>
        </Field>
        <Field {...fieldProps('currency')} label="Currency">
          <select className="field" {...input('currency')}>
            {currencies.map((c) => (
              <option key={c} value={c}>
                {c} — {safeCurrencyName(c)}
              </option>
            ))}
          </select>
        </Field>
      </div>
      <div className="mt-4 grid gap-4 sm:grid-cols-3">
        <Field {...fieldProps('taxRate')} label="Tax rate" hint="In percent, e.g. 20; 0 when you charge no tax.">
          <WithUnit unit="%">
            <input className="field rounded-r-none" inputMode="decimal" {...input('taxRate', true)} />
          </WithUnit>
        </Field>
        <div className="sm:col-span-2">
          <span className="label" id={`${ids}-taxMode-label`}>
            Your prices
          </span>
          <div className="flex flex-wrap gap-2" role="radiogroup" aria-labelledby={`${ids}-taxMode-label`}>
            <label className={CHOICE}>
              <input type="radio" value="exclusive" {...taxModeProps} /> exclude tax (added on top)
            </label>
            <label className={CHOICE}>
              <input type="radio" value="inclusive" {...taxModeProps} /> include tax
            </label>
          </div>
        </div>
      </div>
    </>
  );
}

function safeCurrencyName(code: string) {
  try {
    return currencyName(code);
  } catch {
    return code;
  }
}

/**
 * How a form's fields are wired: each control gets its id, `aria-invalid` and the ids of its hint and
 * error (`input`), and each `Field` its id and message (`fieldProps`).
 */
export function fieldWiring<N extends string>(ids: string, errors: Partial<Record<N, { message?: unknown }>>, register: (name: N) => object) {
  const describedBy = (name: N, hint: boolean) =>
    [errors[name] ? `${ids}-${name}-error` : null, hint ? `${ids}-${name}-hint` : null].filter(Boolean).join(' ') || undefined;
  const input = (name: N, hint = false) => ({
    id: `${ids}-${name}`,
    'aria-invalid': errors[name] ? true : undefined,
    'aria-describedby': describedBy(name, hint),
    ...register(name),
  });
  const fieldProps = (name: N) => {
    const message = errors[name]?.message;
    return { id: `${ids}-${name}`, error: typeof message === 'string' ? message : undefined };
  };
  return { input, fieldProps };
}

/** Puts each of the server's field issues on its field, focusing the first one placed. */
export function placeServerIssues<N extends string>(
  issues: { path: (string | number)[]; message: string }[] | undefined,
  fieldForPath: Partial<Record<string, N>>,
  setError: (name: N, error: { type: string; message: string }, options: { shouldFocus: boolean }) => void,
): void {
  let placed = false;
  for (const issue of issues ?? []) {
    const field = fieldForPath[issue.path.join('.')] ?? fieldForPath[String(issue.path[0])];
    if (field) {
      setError(field, { type: 'server', message: issue.message }, { shouldFocus: !placed });
      placed = true;
    }
  }
}
