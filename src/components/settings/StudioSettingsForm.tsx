import { useId, useRef, useState, type ReactNode } from 'react';
import { useForm, type FieldPath } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import {
  LOGO_MAX_BYTES,
  OPACITY_MAX_PCT,
  OPACITY_MIN_PCT,
  PAPER_HEX,
  WATERMARK_TEXT_MAX,
  checkBrandColour,
  formatContrast,
  studioSettingsSchema,
  type StudioSettings,
  type StudioSettingsDto,
  type StudioSettingsInput,
} from '../../lib/schemas/studio';
import { SUPPORTED_CURRENCIES, currencyName, formatMoney, minorUnits, parseMoney } from '../../lib/currency';
import { WHITE_HEX, isHexColor, parseHexColor, passesAA } from '../../lib/contrast';
import WatermarkPreview from './WatermarkPreview';

type Props = { initial: StudioSettingsDto };

export const TAX_CAUTION = 'Fillcard computes tax from your rate; you stay responsible for local tax rules.';
export const RETENTION_CAUTION =
  'Photos of people are personal data. Deleting a shoot removes its photos and records. An owner deletes a shoot from its Finals tab by typing its title; archiving only closes the client’s gallery. Consent and model releases, especially for minors, follow your local law.';

const toHex = (n: number) => Math.max(0, Math.min(255, Math.round(n))).toString(16).padStart(2, '0');

/** The same hue made darker, step by step, until white text on it meets AA; null if none does. */
export function darkerPassingShade(hex: string): string | null {
  if (!isHexColor(hex)) return null;
  const { r, g, b } = parseHexColor(hex);
  for (let f = 0.97; f > 0.05; f -= 0.03) {
    const c = `#${toHex(r * f)}${toHex(g * f)}${toHex(b * f)}`;
    if (passesAA(WHITE_HEX, c)) return c;
  }
  return null;
}

export default function StudioSettingsForm({ initial }: Props) {
  const ids = useId();
  const [status, setStatus] = useState<{ kind: 'ok' | 'error'; text: string } | null>(null);
  const [hasLogo, setHasLogo] = useState(initial.hasLogo);
  const [logoVersion, setLogoVersion] = useState(0);
  const [logoMessage, setLogoMessage] = useState<{ kind: 'ok' | 'error'; text: string } | null>(null);
  const [isLogoBusy, setLogoBusy] = useState(false);
  const fileRef = useRef<HTMLInputElement>(null);
  const { hasLogo: _ignored, ...values } = initial;

  const {
    register,
    handleSubmit,
    setValue,
    setError,
    watch,
    reset,
    formState: { errors, isSubmitting, isDirty },
  } = useForm<StudioSettingsInput, unknown, StudioSettings>({
    resolver: zodResolver(studioSettingsSchema),
    defaultValues: values,
    mode: 'onChange',
  });

  const colour = String(watch('brandColour') ?? '').trim().toLowerCase();
  const colourIsHex = /^#[0-9a-f]{6}$/.test(colour);
  const check = colourIsHex ? checkBrandColour(colour) : null;
  const fix = check && !check.whiteOn.passes ? darkerPassingShade(colour) : null;
  const currency = String(watch('defaultCurrency'));
  const priceText = String(watch('defaultExtraPrice') ?? '');
  const opacityPct = Number(watch('watermarkOpacityPct'));
  const watermarkText = String(watch('watermarkText') ?? '');
  let pricePreview: string | null = null;
  try {
    pricePreview = formatMoney(parseMoney(priceText, currency), currency);
  } catch {
    pricePreview = null;
  }

  const onSubmit = handleSubmit(async (data) => {
    setStatus(null);
    try {
      const res = await fetch('/api/studio/settings', {
        method: 'PUT',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify(data),
      });
      const body = (await res.json().catch(() => ({}))) as { error?: string; issues?: { path?: string[]; message: string }[]; settings?: StudioSettingsDto };
      if (!res.ok) {
        const issue = body.issues?.[0];
        if (issue?.path?.[0]) setError(issue.path[0] as FieldPath<StudioSettingsInput>, { message: issue.message });
        setStatus({ kind: 'error', text: body.error ?? `Saving failed (HTTP ${res.status}).` });
        return;
      }
      if (body.settings) {
        const { hasLogo: saved, ...rest } = body.settings;
        reset(rest);
        setHasLogo(saved);
      }
      setStatus({ kind: 'ok', text: 'Settings saved. New frames get the new watermark.' });
    } catch {
      setStatus({ kind: 'error', text: 'Could not reach Fillcard. Check the connection and try again.' });
    }
  }, () => setStatus({ kind: 'error', text: 'Some settings need a look; see the marked fields.' }));

  async function uploadLogo(file: File) {
    setLogoMessage(null);
    if (file.size > LOGO_MAX_BYTES) {
      setLogoMessage({ kind: 'error', text: `“${file.name}” is ${(file.size / 1024 / 1024).toFixed(1)} MB; the logo can be at most 2 MB.` });
      return;
    }
    setLogoBusy(true);
    try {
      const res = await fetch('/api/studio/watermark-logo', { method: 'PUT', headers: { 'content-type': 'image/png' }, body: file });
      const body = (await res.json().catch(() => ({}))) as { error?: string };
      if (!res.ok) {
        setLogoMessage({ kind: 'error', text: body.error ?? `The logo was not taken (HTTP ${res.status}).` });
        return;
      }
      setHasLogo(true);
      setLogoVersion((v) => v + 1);
      setLogoMessage({ kind: 'ok', text: 'Logo saved. New proofs carry the logo instead of the text.' });
    } catch {
      setLogoMessage({ kind: 'error', text: 'Could not reach Fillcard. Check the connection and try again.' });
    } finally {
      setLogoBusy(false);
      if (fileRef.current) fileRef.current.value = '';
    }
  }

  async function removeLogo() {
    setLogoBusy(true);
    setLogoMessage(null);
    try {
      const res = await fetch('/api/studio/watermark-logo', { method: 'DELETE' });
      if (!res.ok) {
        setLogoMessage({ kind: 'error', text: `The logo was not removed (HTTP ${res.status}).` });
        return;
      }
      setHasLogo(false);
      setLogoMessage({ kind: 'ok', text: 'Logo removed. New proofs carry the text again.' });
    } finally {
      setLogoBusy(false);
    }
  }

  const err = (name: keyof StudioSettingsInput) =>
    errors[name] ? <p id={`${ids}-${name}-error`} className="mt-1 text-caption font-semibold text-ember">{errors[name]?.message as string}</p> : null;
  const aria = (name: keyof StudioSettingsInput) => ({
    id: `${ids}-${name}`,
    'aria-invalid': errors[name] ? true : undefined,
    'aria-describedby': errors[name] ? `${ids}-${name}-error` : undefined,
  });
  const field = (name: keyof StudioSettingsInput, label: string, input: ReactNode, hint?: string) => (
    <div className="min-w-0">
      <label className="label" htmlFor={`${ids}-${name}`}>{label}</label>
      {input}
      {hint && !errors[name] ? <p className="mt-1 text-caption text-ink-faint">{hint}</p> : null}
      {err(name)}
    </div>
  );

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-6" aria-label="Studio settings">
      <Section id="studio" title="Studio" lead="Clients see these on their gallery and in every e-mail.">
        <div className="grid gap-4 sm:grid-cols-2">
          <div className="sm:col-span-2">{field('name', 'Studio name', <input className="field" autoComplete="organization" {...aria('name')} {...register('name')} />)}</div>
          {field('contactEmail', 'Contact e-mail', <input className="field" type="email" autoComplete="email" {...aria('contactEmail')} {...register('contactEmail')} />)}
          {field('contactPhone', 'Contact phone', <input className="field" type="tel" autoComplete="tel" {...aria('contactPhone')} {...register('contactPhone')} />)}
        </div>
      </Section>

      <Section id="brand" title="Brand colour" lead="Used for buttons in your clients’ gallery and e-mails, with white text on it.">
        <div className="grid gap-5 md:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
          <div className="flex flex-col gap-3">
            <div className="flex items-end gap-3">
              <div>
                <label className="label" htmlFor={`${ids}-picker`}>Colour</label>
                <input
                  id={`${ids}-picker`}
                  type="color"
                  className="h-11 w-16 cursor-pointer rounded-card border border-paper-edge bg-white p-1"
                  value={colourIsHex ? colour : '#000000'}
                  onChange={(e) => setValue('brandColour', e.target.value, { shouldDirty: true, shouldValidate: true })}
                />
              </div>
              <div className="min-w-0 flex-1">
                <label className="label" htmlFor={`${ids}-brandColour`}>Hex code</label>
                <input className="field font-mono" spellCheck={false} maxLength={7} placeholder="#a4492b" {...aria('brandColour')} {...register('brandColour')} />
              </div>
            </div>
            {err('brandColour')}
            {fix ? (
              <button type="button" className="btn-quiet self-start" onClick={() => setValue('brandColour', fix, { shouldDirty: true, shouldValidate: true })}>
                <span className="inline-block h-4 w-4 rounded-sm border border-ink/20" style={{ background: fix }} aria-hidden="true" />
                Use the darker {fix}
              </button>
            ) : null}
          </div>
          <div className="flex flex-col gap-2" aria-live="polite" data-testid="contrast-check">
            {check ? (
              <>
                <ContrastRow
                  sample={<span className="inline-flex min-h-[36px] items-center rounded-card px-3 font-semibold" style={{ background: check.hex, color: '#fff' }}>View proofs</span>}
                  what="White button text on the colour"
                  ratio={check.whiteOn.ratio}
                  verdict={check.whiteOn.passes ? 'pass' : 'fail'}
                  detail={check.whiteOn.passes ? 'Meets WCAG 2.x AA (4.5:1).' : 'Below WCAG 2.x AA (4.5:1): this colour cannot be saved.'}
                />
                <ContrastRow
                  sample={<span className="inline-flex min-h-[36px] items-center rounded-card border border-paper-edge px-3 font-display font-semibold" style={{ background: PAPER_HEX, color: check.hex }}>Your studio</span>}
                  what="The colour as text on Fillcard’s paper"
                  ratio={check.onPaper.ratio}
                  verdict={check.onPaper.passesNormal ? 'pass' : check.onPaper.passesLarge ? 'large' : 'fail'}
                  detail={check.onPaper.passesNormal ? 'Meets AA for text of any size.' : check.onPaper.passesLarge ? 'Meets AA for large headings (3:1) only.' : 'Below AA even for large headings (3:1); headings will look faint.'}
                />
              </>
            ) : (
              <p className="text-caption text-ink-soft">Type a colour as # and six hex digits to check its contrast.</p>
            )}
          </div>
        </div>
      </Section>

      <Section id="watermark" title="Watermark" lead="Tiled diagonally over every proof a client sees; finals never carry it.">
        <div className="grid gap-5 md:grid-cols-[minmax(0,1fr)_18rem]">
          <div className="flex min-w-0 flex-col gap-4">
            {field('watermarkText', 'Watermark text', <input className="field" maxLength={WATERMARK_TEXT_MAX} {...aria('watermarkText')} {...register('watermarkText')} />, hasLogo ? 'Kept for when you remove the logo.' : 'Your studio’s name works well.')}
            <div>
              <label className="label" htmlFor={`${ids}-watermarkOpacityPct`}>Opacity <span className="tabular-nums normal-case text-ink">{Number.isFinite(opacityPct) ? `${opacityPct}%` : ''}</span></label>
              <input type="range" className="w-full accent-clay" min={OPACITY_MIN_PCT} max={OPACITY_MAX_PCT} step={1} {...aria('watermarkOpacityPct')} {...register('watermarkOpacityPct', { valueAsNumber: true })} />
              <div className="flex justify-between text-caption text-ink-faint" aria-hidden="true"><span>{OPACITY_MIN_PCT}% faint</span><span>{OPACITY_MAX_PCT}% strong</span></div>
              {err('watermarkOpacityPct')}
            </div>
          </div>
          <div className="mx-auto w-full max-w-[18rem] md:row-span-2">
            <WatermarkPreview text={watermarkText} opacityPct={opacityPct} hasLogo={hasLogo} logoVersion={logoVersion} />
          </div>
          <div className="flex min-w-0 flex-col gap-4">
            <div className="rounded-card border border-dashed border-paper-edge p-3">
              <p className="label">Logo instead of text (optional)</p>
              <p className="text-caption text-ink-soft">A PNG of at most 2 MB, ideally white on a transparent background.</p>
              <div className="mt-2 flex flex-wrap items-center gap-2">
                <label className={`btn-quiet cursor-pointer focus-within:outline focus-within:outline-2 focus-within:outline-clay ${isLogoBusy ? 'pointer-events-none opacity-50' : ''}`}>
                  {isLogoBusy ? 'Working…' : hasLogo ? 'Replace logo' : 'Upload logo'}
                  <input
                    ref={fileRef}
                    type="file"
                    accept="image/png"
                    className="sr-only"
                    onChange={(e) => {
                      const f = e.target.files?.[0];
                      if (f) void uploadLogo(f);
                    }}
                  />
                </label>
                {hasLogo ? <button type="button" className="btn-quiet text-ember" disabled={isLogoBusy} onClick={() => void removeLogo()}>Remove logo</button> : null}
              </div>
              {logoMessage ? <p role={logoMessage.kind === 'error' ? 'alert' : 'status'} className={`mt-2 text-caption ${logoMessage.kind === 'error' ? 'text-ember' : 'text-moss'}`}>{logoMessage.text}</p> : null}
            </div>
            <p className="notice-caution text-caption" role="note">
              New watermark settings apply to frames processed from now on; proofs already made keep the watermark they were made with.
            </p>
          </div>
        </div>
      </Section>

      <Section id="package" title="Package defaults" lead="Filled in on every new shoot; each shoot can change them.">
        <div className="grid gap-4 sm:grid-cols-2">
          {field('defaultAllowance', 'Retouches included', <input className="field" type="number" min={0} max={1000} step={1} inputMode="numeric" {...aria('defaultAllowance')} {...register('defaultAllowance')} />)}
          {field(
            'defaultExtraPrice',
            'Price per extra retouch',
            <div className="flex">
              <input className="field rounded-r-none" inputMode="decimal" {...aria('defaultExtraPrice')} {...register('defaultExtraPrice')} />
              <span className="inline-flex items-center rounded-r-card border border-l-0 border-paper-edge bg-paper-deep px-3 text-ink-soft">{currency}</span>
            </div>,
            pricePreview ? `Clients see ${pricePreview}.` : minorUnits(currency) === 0 ? `${currency} has no minor unit: type a whole number.` : `Type it like 25.${'5'.padEnd(minorUnits(currency), '0')}.`,
          )}
          {field(
            'defaultCurrency',
            'Currency',
            <select className="field" {...aria('defaultCurrency')} {...register('defaultCurrency', { deps: ['defaultExtraPrice'] })}>
              {SUPPORTED_CURRENCIES.map((c) => <option key={c} value={c}>{c} — {currencyName(c)}</option>)}
            </select>,
          )}
          {field('taxRatePct', 'Tax rate (%)', <input className="field" type="number" min={0} max={100} step={0.01} inputMode="decimal" {...aria('taxRatePct')} {...register('taxRatePct')} />)}
          <fieldset className="sm:col-span-2">
            <legend className="label">Prices are</legend>
            <div className="flex flex-wrap gap-2">
              {(['exclusive', 'inclusive'] as const).map((mode) => (
                <label key={mode} className="flex min-h-[44px] flex-1 basis-56 cursor-pointer items-start gap-2 rounded-card border border-paper-edge bg-white px-3 py-2 has-[:checked]:border-clay has-[:checked]:bg-clay-light/30">
                  <input type="radio" value={mode} className="mt-1 accent-clay" {...register('taxMode')} />
                  <span>
                    <span className="block font-semibold">{mode === 'exclusive' ? 'Before tax' : 'Including tax'}</span>
                    <span className="block text-caption text-ink-soft">{mode === 'exclusive' ? 'Tax is added on top at checkout.' : 'The price already holds the tax.'}</span>
                  </span>
                </label>
              ))}
            </div>
          </fieldset>
        </div>
        <p className="notice-caution mt-4 text-caption" role="note">{TAX_CAUTION}</p>
      </Section>

      <Section id="retention" title="Expiry and retention" lead="How long links work, and how long shoots are kept.">
        <div className="grid gap-4 sm:grid-cols-3">
          {field('proofExpiryDays', 'Proofs open for (days)', <input className="field" type="number" min={1} max={365} inputMode="numeric" {...aria('proofExpiryDays')} {...register('proofExpiryDays')} />, 'From sending the viewing link.')}
          {field('downloadExpiryDays', 'Downloads open for (days)', <input className="field" type="number" min={1} max={730} inputMode="numeric" {...aria('downloadExpiryDays')} {...register('downloadExpiryDays')} />, 'From the hand-off.')}
          {field('retentionDays', 'Keep shoots for (days)', <input className="field" type="number" min={30} max={3650} inputMode="numeric" {...aria('retentionDays')} {...register('retentionDays')} />, 'Then they are due for deletion.')}
        </div>
        <p className="notice-caution mt-4 text-caption" role="note">{RETENTION_CAUTION}</p>
      </Section>

      <div className="sticky bottom-0 z-10 -mx-4 flex flex-wrap items-center gap-3 border-t border-paper-edge bg-paper/95 px-4 py-3 backdrop-blur sm:mx-0 sm:rounded-card sm:border">
        <button type="submit" className="btn-primary" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : 'Save settings'}</button>
        <p role="status" className={`text-body ${status?.kind === 'error' ? 'text-ember' : status ? 'text-moss' : 'text-ink-soft'}`}>
          {status?.text ?? (isDirty ? 'Unsaved changes.' : '')}
        </p>
      </div>
    </form>
  );
}

function Section({ id, title, lead, children }: { id: string; title: string; lead: string; children: ReactNode }) {
  return (
    <section id={id} className="card scroll-mt-6 p-5 sm:p-6" aria-labelledby={`${id}-heading`}>
      <h2 id={`${id}-heading`} className="text-title">{title}</h2>
      <p className="mb-4 mt-1 text-ink-soft">{lead}</p>
      {children}
    </section>
  );
}

function ContrastRow({ sample, what, ratio, verdict, detail }: { sample: ReactNode; what: string; ratio: number; verdict: 'pass' | 'large' | 'fail'; detail: string }) {
  const tone = verdict === 'pass' ? 'text-moss' : verdict === 'large' ? 'text-amber' : 'text-ember';
  return (
    <div className="flex items-center gap-3 rounded-card border border-paper-edge bg-white p-3">
      <div className="shrink-0">{sample}</div>
      <div className="min-w-0">
        <p className="text-caption text-ink-soft">{what}</p>
        <p className={`font-semibold tabular-nums ${tone}`}>
          {formatContrast(ratio)} · {verdict === 'pass' ? 'passes' : verdict === 'large' ? 'large text only' : 'fails'}
        </p>
        <p className="text-caption text-ink-soft">{detail}</p>
      </div>
    </div>
  );
}
