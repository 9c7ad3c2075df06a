import { useEffect, useState } from 'react';

type Props = {
  text: string;
  opacityPct: number;
  /** With a logo uploaded, proofs carry the logo instead of the text. */
  hasLogo: boolean;
  /** Changes when a new logo is uploaded, so the preview is drawn again. */
  logoVersion: number;
};

const isValid = (text: string, opacityPct: number) => Number.isInteger(opacityPct) && opacityPct >= 5 && opacityPct <= 90 && text.trim().length <= 80;

/**
 * A sample frame watermarked by the server with the same overlay proofs get. The old picture
 * stays up while the next one is drawn, so the preview does not flash while a slider moves.
 */
export default function WatermarkPreview({ text, opacityPct, hasLogo, logoVersion }: Props) {
  const [wanted, setWanted] = useState<string | null>(null);
  const [shown, setShown] = useState<string | null>(null);
  const [failed, setFailed] = useState(false);

  useEffect(() => {
    if (!isValid(text, opacityPct)) return;
    const params = new URLSearchParams({ text: text.trim(), opacity: String(opacityPct), logo: hasLogo ? '1' : '0' });
    if (hasLogo) params.set('v', String(logoVersion));
    const t = window.setTimeout(() => setWanted(`/api/studio/watermark-preview?${params}`), 250);
    return () => window.clearTimeout(t);
  }, [text, opacityPct, hasLogo, logoVersion]);

  const isDrawing = wanted !== null && wanted !== shown;
  return (
    <figure className="flex flex-col gap-2">
      <div className="relative aspect-[4/5] w-full overflow-hidden rounded-card border border-paper-edge bg-paper-deep">
        {shown ? (
          <img src={shown} alt="A sample proof with your watermark" className="absolute inset-0 h-full w-full object-cover" data-testid="watermark-preview" />
        ) : null}
        {/* The next picture loads out of sight and takes over once it is ready. */}
        {isDrawing ? (
          <img
            key={wanted}
            src={wanted}
            alt=""
            aria-hidden="true"
            className="absolute inset-0 h-full w-full object-cover opacity-0"
            onLoad={() => {
              setShown(wanted);
              setFailed(false);
            }}
            onError={() => setFailed(true)}
          />
        ) : null}
        {!shown && !failed ? <span className="absolute inset-0 grid place-items-center text-caption text-ink-soft">Drawing the preview…</span> : null}
        {isDrawing && shown ? (
          <span className="absolute right-2 top-2 rounded-full bg-ink/70 px-2 py-0.5 text-caption text-paper">Updating…</span>
        ) : null}
      </div>
      <figcaption className="text-caption text-ink-soft" aria-live="polite">
        {failed
          ? 'The preview could not be drawn just now; your settings still save.'
          : hasLogo
            ? `Sample proof with your logo at ${opacityPct}% opacity.`
            : `Sample proof with “${text.trim() || '…'}” at ${opacityPct}% opacity.`}
      </figcaption>
    </figure>
  );
}
