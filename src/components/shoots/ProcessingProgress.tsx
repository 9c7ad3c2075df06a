import { useState } from 'react';
import type { FrameCounts, FrameDto } from '../../lib/dto';
import { ApiError, deleteFrame, retryFrame } from './api';
import ProgressBar from '../ui/ProgressBar';

interface Props {
  counts: FrameCounts;
  failed: FrameDto[];
  /** Failed frames may be processed again (only while frames can still be added). */
  canRetry: boolean;
  /** Failed frames may be removed (they never reached the client, so also after picks). */
  canRemove: boolean;
  onChanged: () => void;
}

/** How far the worker has got with the shoot's frames, and what went wrong with which file. */
export default function ProcessingProgress({ counts, failed, canRetry, canRemove, onChanged }: Props) {
  const [busy, setBusy] = useState<string | null>(null);
  const [messages, setMessages] = useState<Record<string, string>>({});
  if (counts.total === 0) return null;
  const done = counts.ready + counts.failed;
  const percent = Math.round((done / counts.total) * 100);
  const working = counts.waiting + counts.processing;

  async function act(frame: FrameDto, what: 'retry' | 'remove') {
    setBusy(frame.id);
    setMessages((m) => ({ ...m, [frame.id]: '' }));
    try {
      if (what === 'retry') await retryFrame(frame.id);
      else await deleteFrame(frame.id);
      onChanged();
    } catch (err) {
      setMessages((m) => ({ ...m, [frame.id]: err instanceof ApiError ? err.message : 'That did not work. Please try again.' }));
    } finally {
      setBusy(null);
    }
  }

  return (
    <section aria-labelledby="processing-heading" className="card p-4 sm:p-5" data-testid="processing">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 id="processing-heading" className="text-title">
          {working ? 'Building proofs and crops' : 'Frames processed'}
        </h2>
        <p className="text-ink-soft" aria-live="polite" data-testid="processing-counts">
          <span className="font-semibold text-moss">{counts.ready} ready</span>
          {' · '}
          <span>{working} waiting</span>
          {' · '}
          <span className={counts.failed ? 'font-semibold text-ember' : undefined}>{counts.failed} failed</span>
          {' · '}
          <span>{counts.total} in all</span>
        </p>
      </div>
      <ProgressBar
        label="Processing progress"
        value={done}
        max={counts.total}
        valueText={`${done} of ${counts.total} frames processed`}
        segments={[{ value: counts.ready, className: 'bg-moss' }, { value: counts.failed, className: 'bg-ember' }]}
      />
      <p className="mt-1 text-caption text-ink-faint">
        {working
          ? `${percent}% done. Each frame gets a thumbnail, a watermarked proof and three ratio crops; you can keep working meanwhile.`
          : counts.failed
            ? 'Every frame has been processed; the ones below need your attention.'
            : 'Every frame has its proof and crops.'}
      </p>
      {failed.length ? (
        <ul className="mt-3 divide-y divide-paper-edge rounded-card border border-ember/30 bg-ember-light/40" data-testid="failed-frames">
          {failed.map((f) => (
            // On a phone the reason gets the full width and the buttons sit under it.
            <li key={f.id} className="flex flex-col gap-2 px-3 py-2.5 sm:flex-row sm:items-start sm:justify-between">
              <div className="min-w-0 flex-1">
                <p className="break-words font-semibold text-ink">{f.name}</p>
                <p className="break-words text-ember">{f.error ?? 'This frame could not be processed.'}</p>
                {messages[f.id] ? (
                  <p className="mt-1 text-caption font-semibold text-ink" role="alert">
                    {messages[f.id]}
                  </p>
                ) : null}
              </div>
              {canRetry || canRemove ? (
                <div className="flex flex-none gap-2">
                  {canRetry ? (
                    <button type="button" className="btn-quiet" disabled={busy === f.id} onClick={() => act(f, 'retry')}>
                      Retry
                    </button>
                  ) : null}
                  {canRemove ? (
                    <button type="button" className="btn-quiet" disabled={busy === f.id} onClick={() => act(f, 'remove')}>
                      Remove
                    </button>
                  ) : null}
                </div>
              ) : null}
            </li>
          ))}
        </ul>
      ) : null}
    </section>
  );
}
