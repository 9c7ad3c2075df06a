import type { FrameDto } from '../../lib/dto';
import { settingsLine } from './frame-facts';

interface Props {
  frames: FrameDto[];
  onOpen: (frameId: string) => void;
  canUpload: boolean;
}

const THUMB_EDGE = 480;

/** The thumbnail's own size, so the browser reserves its box before the image arrives. */
function thumbSize(f: FrameDto): { width: number; height: number } {
  if (!f.width || !f.height) return { width: THUMB_EDGE, height: THUMB_EDGE };
  const scale = Math.min(1, THUMB_EDGE / Math.max(f.width, f.height));
  return { width: Math.round(f.width * scale), height: Math.round(f.height * scale) };
}

const STATE_WORDS: Record<FrameDto['state'], string> = {
  waiting: 'Waiting',
  processing: 'Building',
  ready: 'Ready',
  failed: 'Failed',
};

/** Every frame of the shoot in capture order; a tile opens the frame panel. */
export default function FramesBoard({ frames, onOpen, canUpload }: Props) {
  if (frames.length === 0) {
    return (
      <section className="card flex flex-col items-center gap-3 px-6 py-12 text-center" data-testid="frames-empty">
        <svg width="56" height="56" viewBox="0 0 32 32" aria-hidden="true">
          <rect x="4" y="8" width="17" height="13" rx="2" fill="none" stroke="#6b777d" strokeWidth="1.5" strokeDasharray="3 2" />
          <rect x="11" y="12" width="17" height="13" rx="2" fill="#e9c9b9" />
          <circle cx="16.5" cy="17" r="2" fill="#a4492b" />
        </svg>
        <h2 className="text-title">No frames yet</h2>
        <p className="max-w-md text-ink-soft">
          {canUpload
            ? 'Drop the edited frames of this sitting into the uploader above. Each one gets a thumbnail, a watermarked proof and ratio crops.'
            : 'Frames appear here once the studio owner has uploaded them.'}
        </p>
      </section>
    );
  }
  const hidden = frames.filter((f) => f.hidden).length;
  return (
    <section aria-labelledby="board-heading">
      <div className="mb-3 flex flex-wrap items-baseline justify-between gap-2">
        <h2 id="board-heading" className="text-title">
          Frames
        </h2>
        <p className="text-caption text-ink-faint">
          {frames.length} in capture order{hidden ? ` · ${hidden} hidden from the client` : ''}
        </p>
      </div>
      <ul className="grid grid-cols-3 gap-2 sm:grid-cols-4 sm:gap-3 md:grid-cols-5 lg:grid-cols-6" data-testid="frames-board">
        {frames.map((f) => {
          const size = thumbSize(f);
          const line = settingsLine(f);
          return (
            <li key={f.id}>
              <button
                type="button"
                onClick={() => onOpen(f.id)}
                className="group block w-full rounded-card text-left focus-visible:outline focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-clay"
                aria-label={`${f.name}${f.hidden ? ', hidden' : ''}${f.state === 'ready' ? '' : `, ${STATE_WORDS[f.state].toLowerCase()}`}`}
                data-frame-id={f.id}
                data-state={f.state}
              >
                <span
                  className={[
                    'relative flex aspect-square items-center justify-center overflow-hidden rounded-card border bg-paper-deep',
                    f.state === 'failed' ? 'border-ember/50' : 'border-paper-edge group-hover:border-clay/60',
                  ].join(' ')}
                >
                  {f.urls.thumb ? (
                    <img
                      src={f.urls.thumb}
                      alt=""
                      width={size.width}
                      height={size.height}
                      loading="lazy"
                      decoding="async"
                      className={['h-full w-full object-contain transition-opacity', f.hidden ? 'opacity-35' : ''].join(' ')}
                    />
                  ) : (
                    <span className={['px-2 text-center text-caption', f.state === 'failed' ? 'font-semibold text-ember' : 'text-ink-faint'].join(' ')}>
                      {f.state === 'processing' ? <span className="mb-1 inline-block h-4 w-4 animate-spin rounded-full border-2 border-clay border-t-transparent align-middle" aria-hidden="true" /> : null}
                      <span className="block">{STATE_WORDS[f.state]}</span>
                    </span>
                  )}
                  {f.hidden ? (
                    <span className="absolute left-1.5 top-1.5 rounded-full bg-ink/80 px-2 py-0.5 text-[0.7rem] font-semibold text-paper">Hidden</span>
                  ) : null}
                  {f.cropsPending ? (
                    <span className="absolute bottom-1.5 right-1.5 rounded-full bg-white/90 px-2 py-0.5 text-[0.7rem] font-semibold text-clay-dark">New crops…</span>
                  ) : null}
                </span>
                <span className={['mt-1 block truncate text-caption', f.hidden ? 'text-ink-faint' : 'text-ink-soft'].join(' ')}>{f.name}</span>
                <span className="block truncate text-[0.72rem] leading-4 text-ink-faint">{line ?? '\u00a0'}</span>
              </button>
            </li>
          );
        })}
      </ul>
    </section>
  );
}
