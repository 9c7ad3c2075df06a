import { useEffect, useId, useRef, useState } from 'react';
import { useForm, type FieldErrors, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { shootDetailsSchema, TERMS_FIELDS, type ShootDetails, type ShootDetailsResult } from '../../lib/schemas/shoot';
import { SUPPORTED_CURRENCIES, formatMoney, parseMoney, toDecimalText } from '../../lib/currency';
import { parsePercent, percentText } from './percent';
import { CHOICE, Field, FormSection, PackageTermsFields, fieldWiring, flattenErrors, placeServerIssues } from './form-fields';
import { TAX_CAUTION } from './NewShootForm';

interface Props {
  shootId: string;
  initial: ShootDetails;
  /** The fields saved just before this page was loaded again (see below), for the status line. */
  savedFields?: string[];
}

/** Fields the shoot's header shows: after saving one of them the page loads again, so the header agrees. */
const HEADER_FIELDS = new Set(['title', 'shotOn', 'allowance', 'extraPriceMinor', 'currency']);

const savedWords = (changed: string[]) => `Saved: ${changed.map((c) => CHANGED_WORDS[c] ?? c).join(', ')}.`;

/** What the owner types; money in major units and tax in per cent, as in the new-shoot form. */
interface FormValues {
  title: string;
  shotOn: string;
  proofExpiresOn: string;
  passcodeChoice: 'keep' | 'set' | 'remove';
  passcode: string;
  allowance: string;
  extraPrice: string;
  currency: string;
  taxRate: string;
  taxMode: 'exclusive' | 'inclusive';
}
type FieldName = keyof FormValues;

/** Where a message about the API's field belongs in this form. */
const FIELD_FOR_PATH: Record<string, FieldName> = {
  title: 'title',
  shotOn: 'shotOn',
  proofExpiresOn: 'proofExpiresOn',
  passcode: 'passcode',
  allowance: 'allowance',
  extraPriceMinor: 'extraPrice',
  currency: 'currency',
  taxRateBp: 'taxRate',
  taxMode: 'taxMode',
};

/** How each changed field is named in the success message. */
const CHANGED_WORDS: Record<string, string> = {
  title: 'title',
  shotOn: 'date of the shoot',
  proofExpiresOn: 'proof expiry date',
  passcode: 'passcode',
  allowance: 'retouches included',
  extraPriceMinor: 'price per extra retouch',
  currency: 'currency',
  taxRateBp: 'tax rate',
  taxMode: 'tax mode',
};

const valuesOf = (d: ShootDetails): FormValues => ({
  title: d.title,
  shotOn: d.shotOn,
  proofExpiresOn: d.proofExpiresOn,
  passcodeChoice: 'keep',
  passcode: '',
  allowance: String(d.allowance),
  extraPrice: toDecimalText(d.extraPriceMinor, d.currency),
  currency: d.currency,
  taxRate: percentText(d.taxRateBp),
  taxMode: d.taxMode,
});

type Problems = Partial<Record<FieldName, { type: string; message: string }>>;

/**
 * The change to send: only what differs from the saved details, so an untouched expiry that has
 * already passed does not stand in the way of a new title. The terms go as one set when any of
 * them changed (a price is read in the currency chosen beside it).
 */
function toPatch(v: FormValues, saved: ShootDetails): { input: Record<string, unknown>; problems: Problems } {
  const input: Record<string, unknown> = {};
  const problems: Problems = {};
  if (v.title.trim() !== saved.title) input.title = v.title;
  if (v.shotOn !== saved.shotOn) input.shotOn = v.shotOn;
  if (v.proofExpiresOn !== saved.proofExpiresOn) input.proofExpiresOn = v.proofExpiresOn;
  if (v.passcodeChoice === 'set') input.passcode = v.passcode;
  if (v.passcodeChoice === 'remove') input.passcode = '';
  if (!saved.termsLocked) {
    let extraPriceMinor = Number.NaN;
    try {
      extraPriceMinor = parseMoney(v.extraPrice, v.currency);
    } catch (err) {
      problems.extraPrice = { type: 'parse', message: (err as Error).message };
    }
    const tax = parsePercent(v.taxRate);
    if (typeof tax === 'string') problems.taxRate = { type: 'parse', message: tax };
    const allowanceText = v.allowance.trim();
    const terms = {
      allowance: allowanceText === '' ? Number.NaN : Number(allowanceText),
      extraPriceMinor,
      currency: v.currency,
      taxRateBp: typeof tax === 'number' ? tax : Number.NaN,
      taxMode: v.taxMode,
    };
    if (TERMS_FIELDS.some((f) => terms[f] !== saved[f])) Object.assign(input, terms);
  }
  return { input, problems };
}

const checkDetails = zodResolver(shootDetailsSchema);

export { CHANGED_WORDS };

export default function ShootDetailsForm({ shootId, initial, savedFields }: Props) {
  const ids = useId();
  const saved = useRef(initial);
  const [details, setDetails] = useState(initial);
  const [serverError, setServerError] = useState<string | null>(null);
  const [status, setStatus] = useState<string | null>(savedFields?.length ? savedWords(savedFields) : null);
  const statusRef = useRef<HTMLParagraphElement>(null);
  // Loaded again after a save: bring the "Saved" line into view, since the page starts at the top.
  useEffect(() => {
    if (savedFields?.length) statusRef.current?.scrollIntoView({ block: 'center' });
  }, [savedFields]);

  // The shared schema decides; this only reads typed money and per cent first and puts each message on its field.
  const resolver = useRef<Resolver<FormValues>>(async (values, context, options) => {
    const { input, problems } = toPatch(values, saved.current);
    const checked = await checkDetails(input as never, context, { ...options, fields: {}, names: undefined } as never);
    for (const [path, message] of flattenErrors(checked.errors as FieldErrors)) {
      const field = FIELD_FOR_PATH[path] ?? FIELD_FOR_PATH[path.split('.')[0]!];
      if (field && !problems[field]) problems[field] = { type: 'schema', message };
    }
    if (Object.keys(problems).length) return { values: {}, errors: problems as FieldErrors<FormValues> };
    return { values, errors: {} };
  }).current;

  const {
    register,
    handleSubmit,
    watch,
    reset,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<FormValues>({ resolver, mode: 'onTouched', defaultValues: valuesOf(initial) });
  const currency = watch('currency');
  const passcodeChoice = watch('passcodeChoice');

  async function submit(values: FormValues) {
    setServerError(null);
    setStatus(null);
    const { input } = toPatch(values, saved.current);
    if (Object.keys(input).length === 0) {
      setStatus('Nothing to save: every detail is as it was.');
      return;
    }
    let res: Response;
    try {
      res = await fetch(`/api/shoots/${shootId}`, { method: 'PATCH', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(input) });
    } catch {
      setServerError('Fillcard could not be reached. Check your connection and try again; nothing was saved.');
      return;
    }
    const data = (await res.json().catch(() => ({}))) as Partial<ShootDetailsResult> & { error?: string; issues?: { path: (string | number)[]; message: string }[] };
    if (res.ok && data.details) {
      saved.current = data.details;
      setDetails(data.details);
      reset(valuesOf(data.details));
      const changed = data.changed ?? [];
      if (changed.some((c) => HEADER_FIELDS.has(c))) {
        window.location.assign(`${window.location.pathname}?saved=${encodeURIComponent(changed.join(','))}`);
        return;
      }
      setStatus(changed.length ? savedWords(changed) : 'Nothing to save: every detail is as it was.');
      return;
    }
    if (res.status === 401) {
      setServerError('Your session has ended. Sign in again in another tab, then save; your entries stay here.');
      return;
    }
    placeServerIssues(data.issues, FIELD_FOR_PATH, setError);
    setServerError(data.error ?? `The details could not be saved (error ${res.status}). Please try again.`);
  }

  const { input, fieldProps } = fieldWiring<FieldName>(ids, errors, (name) => register(name));
  const day = (d: string) => new Date(`${d}T12:00:00Z`).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });

  if (details.locked) {
    return (
      <div className="card max-w-2xl p-5 sm:p-6">
        <p className="notice-caution" data-testid="details-locked">{details.locked}</p>
        <Summary details={details} />
      </div>
    );
  }

  const currencies: string[] = (SUPPORTED_CURRENCIES as readonly string[]).includes(details.currency) ? [...SUPPORTED_CURRENCIES] : [details.currency, ...SUPPORTED_CURRENCIES];

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="max-w-4xl space-y-6" aria-describedby={serverError ? `${ids}-server` : undefined}>
      {serverError ? (
        <p id={`${ids}-server`} role="alert" className="notice-error">
          {serverError}
        </p>
      ) : null}

      <FormSection title="Sitting">
        <div className="mt-4 grid gap-4 sm:grid-cols-[2fr_1fr]">
          <Field {...fieldProps('title')} label="Title">
            <input className="field" maxLength={160} autoComplete="off" {...input('title')} />
          </Field>
          <Field {...fieldProps('shotOn')} label="Date of the shoot">
            <input className="field" type="date" {...input('shotOn')} />
          </Field>
        </div>
      </FormSection>

      <FormSection title="Proofs">
        {details.proofsClosed && details.stage !== 'delivered' ? (
          <p className="notice-caution mt-3" data-testid="proofs-closed">
            The proofs closed on {day(details.proofExpiresOn)}. Choose today or a later day to open the gallery to the client again.
          </p>
        ) : null}
        <div className="mt-4 grid gap-4 sm:grid-cols-2">
          <Field
            {...fieldProps('proofExpiresOn')}
            label="Proofs close after"
            hint={details.stage === 'delivered' ? 'The finals are delivered: the client’s downloads follow the hand-off, not this day.' : 'The client can look and pick until the end of this day (UTC). Earlier or later is fine, as long as it is not in the past.'}
          >
            <input className="field" type="date" {...input('proofExpiresOn', true)} />
          </Field>
        </div>
      </FormSection>

      <FormSection title="Passcode">
        <p className="mt-1 text-ink-soft" data-testid="passcode-state">
          {details.hasPasscode ? 'A passcode is asked for when the viewing link is opened.' : 'No passcode: anyone with the viewing link can open the gallery.'}
        </p>
        <div className="mt-3 flex flex-wrap gap-2" role="radiogroup" aria-label="Passcode">
          <label className={CHOICE}>
            <input type="radio" value="keep" {...register('passcodeChoice')} /> {details.hasPasscode ? 'Keep it' : 'Keep it open'}
          </label>
          <label className={CHOICE}>
            <input type="radio" value="set" {...register('passcodeChoice')} /> {details.hasPasscode ? 'Change it' : 'Set a passcode'}
          </label>
          {details.hasPasscode ? (
            <label className={CHOICE}>
              <input type="radio" value="remove" {...register('passcodeChoice')} /> Remove it
            </label>
          ) : null}
        </div>
        {passcodeChoice === 'set' ? (
          <Field
            {...fieldProps('passcode')}
            label="New passcode"
            className="mt-4 max-w-sm"
            hint="At least 4 characters. Anyone who already opened the gallery is asked for the new one. Tell it to your client by another way than e-mail."
          >
            <input className="field" autoComplete="off" maxLength={64} {...input('passcode', true)} />
          </Field>
        ) : null}
        {passcodeChoice === 'remove' ? (
          <p className="notice-caution mt-4 text-caption">Without a passcode, anyone who has the viewing link can see the proofs.</p>
        ) : null}
      </FormSection>

      <FormSection title="Package">
        {details.termsLocked ? (
          <>
            <p className="notice-caution mt-3" data-testid="terms-locked">
              {details.termsLocked}
            </p>
            <dl className="mt-4 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
              <dt className="text-ink-faint">Retouches included</dt>
              <dd>{details.allowance}</dd>
              <dt className="text-ink-faint">Price per extra retouch</dt>
              <dd>{formatMoney(details.extraPriceMinor, details.currency)}</dd>
              <dt className="text-ink-faint">Tax</dt>
              <dd>
                {percentText(details.taxRateBp)}%{details.taxRateBp > 0 ? (details.taxMode === 'inclusive' ? ', included in the price' : ', added on top') : ''}
              </dd>
            </dl>
          </>
        ) : (
          <>
            <PackageTermsFields ids={ids} currency={currency} currencies={currencies} input={input} fieldProps={fieldProps} taxModeProps={register('taxMode')} />
            <p className="mt-4 text-caption text-ink-faint">
              The terms can change until the client sends their picks or starts paying for extras.
            </p>
            <p className="notice-caution mt-2 text-caption">{TAX_CAUTION}</p>
          </>
        )}
      </FormSection>

      <div className="flex flex-wrap items-center justify-end gap-3">
        <p ref={statusRef} role="status" className={status ? 'notice-ok mr-auto' : 'sr-only'} data-testid="details-status">
          {status ?? ''}
        </p>
        <button type="submit" className="btn-accent" disabled={isSubmitting}>
          {isSubmitting ? 'Saving…' : 'Save details'}
        </button>
      </div>
    </form>
  );
}


/** The details as text, for a shoot that can no longer change. */
function Summary({ details }: { details: ShootDetails }) {
  const day = (d: string) => new Date(`${d}T12:00:00Z`).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
  return (
    <dl className="mt-4 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
      <dt className="text-ink-faint">Title</dt>
      <dd className="break-words">{details.title}</dd>
      <dt className="text-ink-faint">Date of the shoot</dt>
      <dd>{day(details.shotOn)}</dd>
      <dt className="text-ink-faint">Proofs closed after</dt>
      <dd>{day(details.proofExpiresOn)}</dd>
      <dt className="text-ink-faint">Passcode</dt>
      <dd>{details.hasPasscode ? 'Set' : 'None'}</dd>
      <dt className="text-ink-faint">Retouches included</dt>
      <dd>{details.allowance}</dd>
      <dt className="text-ink-faint">Price per extra retouch</dt>
      <dd>{formatMoney(details.extraPriceMinor, details.currency)}</dd>
    </dl>
  );
}
