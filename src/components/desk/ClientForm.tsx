import { useId, useState, type ReactElement } from 'react';
import { useForm, type FieldPath } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { CLIENT_NOTES_MAX, clientSchema, type ClientDto } from '../../lib/schemas/clients';

type Values = z.input<typeof clientSchema>;

type Props =
  | { mode: 'create'; clientId?: undefined; initial?: undefined }
  | { mode: 'edit'; clientId: string; initial: Values };

const FIELDS: string[] = ['name', 'email', 'phone', 'notes'];

type Issue = { path?: (string | number)[]; message: string };

/** Adds a client, or edits one; checked by the same schema as the server before it is sent. */
export default function ClientForm({ mode, clientId, initial }: Props) {
  const ids = useId();
  const [status, setStatus] = useState<{ kind: 'ok' | 'error'; text: string } | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    reset,
    formState: { errors, isSubmitting, isDirty },
  } = useForm<Values, unknown, z.output<typeof clientSchema>>({
    resolver: zodResolver(clientSchema),
    defaultValues: initial ?? { name: '', email: '', phone: '', notes: '' },
  });

  const onSubmit = handleSubmit(async (values) => {
    setStatus(null);
    let res: Response;
    try {
      res = await fetch(mode === 'create' ? '/api/clients' : `/api/clients/${encodeURIComponent(clientId!)}`, {
        method: mode === 'create' ? 'POST' : 'PUT',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify(values),
      });
    } catch {
      setStatus({ kind: 'error', text: 'Could not reach Fillcard. Check the connection and try again.' });
      return;
    }
    const body = (await res.json().catch(() => ({}))) as { error?: string; issues?: Issue[]; client?: ClientDto; url?: string };
    if (!res.ok) {
      // The server checks with the same schema; put its word beside the field it is about.
      const issue = body.issues?.[0];
      const field = issue?.path?.[0];
      if (typeof field === 'string' && FIELDS.includes(field)) {
        setError(field as FieldPath<Values>, { message: issue!.message });
      }
      setStatus({ kind: 'error', text: body.error ?? `Saving failed (HTTP ${res.status}).` });
      return;
    }
    if (mode === 'create' && body.url) {
      window.location.assign(`${body.url}?added=1`);
      return;
    }
    if (body.client) reset({ name: body.client.name, email: body.client.email, phone: body.client.phone, notes: body.client.notes });
    setStatus({ kind: 'ok', text: 'Saved.' });
  });

  const field = (name: keyof Values, label: string, input: ReactElement, hint?: string) => (
    <div>
      <label className="label" htmlFor={`${ids}-${name}`}>{label}</label>
      {input}
      {hint && !errors[name] ? <p id={`${ids}-${name}-hint`} className="mt-1 text-caption text-ink-faint">{hint}</p> : null}
      {errors[name] ? (
        <p id={`${ids}-${name}-error`} className="mt-1 text-caption font-semibold text-ember">{errors[name]?.message}</p>
      ) : null}
    </div>
  );
  const described = (name: keyof Values, hasHint = false) => ({
    id: `${ids}-${name}`,
    'aria-invalid': errors[name] ? true : undefined,
    'aria-describedby': errors[name] ? `${ids}-${name}-error` : hasHint ? `${ids}-${name}-hint` : undefined,
  });

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-3" aria-label={mode === 'create' ? 'Add a client' : 'Client details'}>
      {field('name', 'Name', <input className="field" autoComplete="off" {...described('name')} {...register('name')} />)}
      {field('email', 'E-mail', <input className="field" type="email" autoComplete="off" {...described('email')} {...register('email')} />, 'Viewing links and receipts go here.')}
      {field('phone', 'Phone (optional)', <input className="field" type="tel" autoComplete="off" {...described('phone')} {...register('phone')} />)}
      {field(
        'notes',
        'Notes (optional)',
        <textarea className="field min-h-[5.5rem]" rows={3} maxLength={CLIENT_NOTES_MAX} {...described('notes', true)} {...register('notes')} />,
        'Only what the work needs: no health or other sensitive details.',
      )}
      <div className="flex flex-wrap items-center gap-3 pt-1">
        <button type="submit" className={mode === 'create' ? 'btn-primary w-full sm:w-auto' : 'btn-primary'} disabled={isSubmitting || (mode === 'edit' && !isDirty)}>
          {isSubmitting ? 'Saving…' : mode === 'create' ? 'Add client' : 'Save changes'}
        </button>
        <p role="status" className={status?.kind === 'error' ? 'text-ember' : 'text-moss'}>
          {status?.text}
        </p>
      </div>
    </form>
  );
}
