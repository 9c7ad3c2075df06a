import { useEffect, useState } from 'react';
import { formatBytes } from '../shoots/frame-facts';
import type { GalleryFinal, GalleryFinalsData } from './types';

const day = (iso: string) => new Date(iso).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
const REFRESH_MS = 20 * 60_000;

/**
 * The client's finished photos after hand-off: each final with its crops and download buttons,
 * "download all" and "download crops" as ZIPs, and the date downloads close.
 */
export default function FinalsGallery({ initial }: { initial: GalleryFinalsData }) {
  const [data, setData] = useState(initial);
  // Preview links are signed for an hour or two: refresh them while the page stays open.
  useEffect(() => {
    const t = window.setInterval(async () => {
      try {
        const res = await fetch(`/api/gallery/${initial.shootId}/finals`, { credentials: 'same-origin', headers: { Accept: 'application/json' } });
        if (res.ok) setData((await res.json()) as GalleryFinalsData);
      } catch {
        /* the next round tries again */
      }
    }, REFRESH_MS);
    return () => window.clearInterval(t);
  }, [initial.shootId]);
  const n = data.finals.length;

  return (
    <div className="pb-10">
      <section className="card p-4 sm:p-5" aria-labelledby="download-all-heading">
        <h2 id="download-all-heading" className="text-lead">Save your photos</h2>
        <p className="text-ink-soft" data-testid="download-until">
          Downloads close on <strong className="text-ink">{day(data.downloadUntil)}</strong>: save copies of your own before then.
        </p>
        <div className="mt-4 grid gap-3 sm:grid-cols-2">
          <a className="btn-brand" href={data.zip.finalsUrl} download={data.zip.finalsName} data-testid="download-all">
            Download all {n === 1 ? 'the photo' : `${n} photos`} (ZIP, {formatBytes(data.zip.finalsBytes)})
          </a>
          <a className="btn-quiet" href={data.zip.cropsUrl} download={data.zip.cropsName} data-testid="download-crops">
            Download crops for posting (ZIP, {formatBytes(data.zip.cropsBytes)})
          </a>
        </div>
        <p className="mt-3 text-caption text-ink-faint">
          Crops: 4:5 and 1:1 for posts, 9:16 for stories, and 8×10 for prints, each at full resolution. On a phone, the ZIP goes to your Files or Downloads.
        </p>
      </section>

      <ol className="mt-6 grid gap-5 sm:grid-cols-2 lg:grid-cols-3" aria-label="Your finished photos">
        {data.finals.map((f) => <FinalCard key={f.id} final={f} />)}
      </ol>
    </div>
  );
}

function FinalCard({ final: f }: { final: GalleryFinal }) {
  return (
    <li className="card overflow-hidden" data-testid="final-card" data-number={f.number}>
      <a href={f.preview.url} target="_blank" rel="noopener" className="block bg-paper-deep" aria-label={`Photo ${f.number}, open larger`}>
        <img src={f.preview.url} alt={`Photo ${f.number}`} width={f.preview.width} height={f.preview.height} loading="lazy" decoding="async"
          className="aspect-[4/5] w-full object-contain" />
      </a>
      <div className="p-3 sm:p-4">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <p className="font-semibold">Photo {String(f.number).padStart(2, '0')}</p>
          <p className="text-caption text-ink-faint">{f.width} × {f.height} px · {formatBytes(f.bytes)}</p>
        </div>
        <a className="btn-brand mt-3 w-full" href={f.downloadUrl} download={f.fileName} data-testid="download-final">
          Download
        </a>
        {f.crops.length ? (
          <details className="mt-3 group">
            <summary className="flex min-h-[44px] cursor-pointer list-none items-center justify-between rounded-card px-1 text-ink-soft hover:text-ink">
              <span>Crops for posting and print</span>
              <span aria-hidden="true" className="transition-transform group-open:rotate-180">▾</span>
            </summary>
            <p className="px-1 text-caption text-ink-faint">Tap a crop to save it at full resolution.</p>
            <ul className="mt-2 grid grid-cols-4 gap-2">
              {f.crops.map((c) => (
                <li key={c.kind} className="min-w-0">
                  <a href={c.downloadUrl} download={c.fileName} className="block rounded-md border border-paper-edge p-1 no-underline hover:border-clay"
                    aria-label={`Download the ${c.label} crop of photo ${f.number}`} data-testid="download-crop" data-kind={c.kind}>
                    <span className="flex h-20 items-center justify-center">
                      {c.preview ? <img src={c.preview.url} alt="" loading="lazy" className="max-h-20 max-w-full rounded-sm object-contain" /> : null}
                    </span>
                    <span className="mt-1 block text-center text-caption text-ink">{c.label}</span>
                  </a>
                </li>
              ))}
            </ul>
          </details>
        ) : null}
      </div>
    </li>
  );
}
