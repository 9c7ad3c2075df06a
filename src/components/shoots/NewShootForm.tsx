import { useId, useState } from 'react';
import { useForm, type FieldErrors, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { newShootSchema, type NewShootInput } from '../../lib/schemas/shoot';
import { SUPPORTED_CURRENCIES, parseMoney, toDecimalText } from '../../lib/currency';
import { parsePercent, percentText } from './percent';
import { CHOICE, Field, FormSection, PackageTermsFields, fieldWiring, flattenErrors, placeServerIssues } from './form-fields';

export interface ClientChoice {
  id: string;
  name: string;
  email: string;
}

export interface ShootDefaults {
  allowance: number;
  extraPriceMinor: number;
  currency: string;
  taxRateBp: number;
  taxMode: 'exclusive' | 'inclusive';
  /** The sitting's day and the proofs' last day, as YYYY-MM-DD. */
  shotOn: string;
  proofExpiresOn: string;
}

interface Props {
  clients: ClientChoice[];
  defaults: ShootDefaults;
  /** A client to start with, e.g. when coming from that client's page. */
  clientId?: string | null;
}

/** What the owner types; money in major units and tax in per cent, turned into the API's shape on submit. */
interface FormValues {
  clientKind: 'existing' | 'new';
  clientId: string;
  clientName: string;
  clientEmail: string;
  title: string;
  shotOn: string;
  allowance: string;
  extraPrice: string;
  currency: string;
  taxRate: string;
  taxMode: 'exclusive' | 'inclusive';
  proofExpiresOn: string;
  passcode: string;
}

export const TAX_CAUTION = 'Fillcard computes tax from your rate; you stay responsible for local tax rules.';

type FieldName = keyof FormValues;

/** Where a message about the API's field belongs in this form. */
const FIELD_FOR_PATH: Record<string, FieldName> = {
  'client.id': 'clientId',
  'client.name': 'clientName',
  'client.email': 'clientEmail',
  client: 'clientId',
  title: 'title',
  shotOn: 'shotOn',
  allowance: 'allowance',
  extraPriceMinor: 'extraPrice',
  currency: 'currency',
  taxRateBp: 'taxRate',
  taxMode: 'taxMode',
  proofExpiresOn: 'proofExpiresOn',
  passcode: 'passcode',
};

function toInput(v: FormValues, extraPriceMinor: number, taxRateBp: number): Record<string, unknown> {
  return {
    client: v.clientKind === 'existing' ? { kind: 'existing', id: v.clientId } : { kind: 'new', name: v.clientName, email: v.clientEmail },
    title: v.title,
    shotOn: v.shotOn,
    allowance: v.allowance.trim() === '' ? Number.NaN : v.allowance,
    extraPriceMinor,
    currency: v.currency,
    taxRateBp,
    taxMode: v.taxMode,
    proofExpiresOn: v.proofExpiresOn,
    passcode: v.passcode,
  };
}

const checkShoot = zodResolver(newShootSchema);

/**
 * The shared schema decides; this only turns typed money and per cent into minor units and basis
 * points first, and puts each message back on the field the owner typed into.
 */
const resolver: Resolver<FormValues> = async (values, context, options) => {
  const errors: Partial<Record<FieldName, { type: string; message: string }>> = {};
  let extraPriceMinor = Number.NaN;
  try {
    extraPriceMinor = parseMoney(values.extraPrice, values.currency);
  } catch (err) {
    errors.extraPrice = { type: 'parse', message: (err as Error).message };
  }
  const tax = parsePercent(values.taxRate);
  if (typeof tax === 'string') errors.taxRate = { type: 'parse', message: tax };
  const input = toInput(values, extraPriceMinor, typeof tax === 'number' ? tax : Number.NaN);
  const checked = await checkShoot(input as never, context, { ...options, fields: {}, names: undefined } as never);
  for (const [path, message] of flattenErrors(checked.errors as FieldErrors)) {
    const field = FIELD_FOR_PATH[path] ?? FIELD_FOR_PATH[path.split('.')[0]!];
    if (field && !errors[field]) errors[field] = { type: 'schema', message };
  }
  if (Object.keys(errors).length) return { values: {}, errors: errors as FieldErrors<FormValues> };
  return { values, errors: {} };
};

export default function NewShootForm({ clients, defaults, clientId }: Props) {
  const ids = useId();
  const [serverError, setServerError] = useState<string | null>(null);
  const startClient = clients.find((c) => c.id === clientId) ?? null;
  const {
    register,
    handleSubmit,
    watch,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<FormValues>({
    resolver,
    mode: 'onTouched',
    defaultValues: {
      clientKind: clients.length ? 'existing' : 'new',
      clientId: startClient?.id ?? '',
      clientName: '',
      clientEmail: '',
      title: '',
      shotOn: defaults.shotOn,
      allowance: String(defaults.allowance),
      extraPrice: toDecimalText(defaults.extraPriceMinor, defaults.currency),
      currency: defaults.currency,
      taxRate: percentText(defaults.taxRateBp),
      taxMode: defaults.taxMode,
      proofExpiresOn: defaults.proofExpiresOn,
      passcode: '',
    },
  });
  const clientKind = watch('clientKind');
  const currency = watch('currency');

  async function submit(values: FormValues) {
    setServerError(null);
    const body = toInput(values, parseMoney(values.extraPrice, values.currency), parsePercent(values.taxRate) as number) as NewShootInput;
    let res: Response;
    try {
      res = await fetch('/api/shoots', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
    } catch {
      setServerError('Fillcard could not be reached. Check your connection and try again; nothing was saved.');
      return;
    }
    const data = (await res.json().catch(() => ({}))) as { url?: string; error?: string; issues?: { path: (string | number)[]; message: string }[] };
    if (res.ok && data.url) {
      window.location.assign(data.url);
      return;
    }
    if (res.status === 401) {
      setServerError('Your session has ended. Sign in again in another tab, then create the shoot; your entries stay here.');
      return;
    }
    placeServerIssues(data.issues, FIELD_FOR_PATH, setError);
    setServerError(data.error ?? `The shoot could not be created (error ${res.status}). Please try again.`);
  }

  const { input, fieldProps } = fieldWiring<FieldName>(ids, errors, (name) => register(name));

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="space-y-6" aria-describedby={serverError ? `${ids}-server` : undefined}>
      {serverError ? (
        <p id={`${ids}-server`} role="alert" className="notice-error">
          {serverError}
        </p>
      ) : null}

      <FormSection title="Client">
        <div className="mt-3 flex flex-wrap gap-2" role="radiogroup" aria-label="Client">
          {clients.length ? (
            <label className={CHOICE}>
              <input type="radio" value="existing" {...register('clientKind')} /> A client of the studio
            </label>
          ) : null}
          <label className={CHOICE}>
            <input type="radio" value="new" {...register('clientKind')} /> A new client
          </label>
        </div>
        {clientKind === 'existing' ? (
          <Field {...fieldProps('clientId')} label="Client" className="mt-4">
            <select className="field" {...input('clientId')}>
              <option value="">Choose a client…</option>
              {clients.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name} — {c.email}
                </option>
              ))}
            </select>
          </Field>
        ) : (
          <div className="mt-4 grid gap-4 sm:grid-cols-2">
            <Field {...fieldProps('clientName')} label="Name">
              <input className="field" autoComplete="off" maxLength={120} {...input('clientName')} />
            </Field>
            <Field {...fieldProps('clientEmail')} label="E-mail" hint="The viewing link goes to this address.">
              <input className="field" type="email" autoComplete="off" maxLength={254} {...input('clientEmail', true)} />
            </Field>
          </div>
        )}
        <p className="mt-4 text-caption text-ink-faint">
          Photos of people are personal data. Consent, and model releases for minors, follow your local law.
        </p>
      </FormSection>

      <FormSection title="Sitting">
        <div className="mt-4 grid gap-4 sm:grid-cols-[2fr_1fr]">
          <Field {...fieldProps('title')} label="Title">
            <input className="field" maxLength={160} placeholder="Family portraits, spring" {...input('title')} />
          </Field>
          <Field {...fieldProps('shotOn')} label="Date of the shoot">
            <input className="field" type="date" {...input('shotOn')} />
          </Field>
        </div>
      </FormSection>

      <FormSection title="Package">
        <PackageTermsFields ids={ids} currency={currency} currencies={SUPPORTED_CURRENCIES} input={input} fieldProps={fieldProps} taxModeProps={register('taxMode')} />
        <p className="notice-caution mt-4 text-caption">{TAX_CAUTION}</p>
      </FormSection>

      <FormSection title="Proofs">
        <div className="mt-4 grid gap-4 sm:grid-cols-2">
          <Field {...fieldProps('proofExpiresOn')} label="Proofs close after" hint="The client can pick until the end of this day (UTC).">
            <input className="field" type="date" {...input('proofExpiresOn', true)} />
          </Field>
          <Field {...fieldProps('passcode')} label="Passcode (optional)" hint="Asked for when the viewing link is opened. Tell it to your client by another way than e-mail.">
            <input className="field" autoComplete="off" maxLength={64} {...input('passcode', true)} />
          </Field>
        </div>
      </FormSection>

      <div className="flex flex-wrap items-center justify-end gap-3">
        <a href="/desk" className="btn-quiet">
          Cancel
        </a>
        <button type="submit" className="btn-accent" disabled={isSubmitting}>
          {isSubmitting ? 'Creating…' : 'Create shoot'}
        </button>
      </div>
    </form>
  );
}
