import { useCallback, useMemo, useRef, useState } from 'react';
import { QueryClient, QueryClientProvider, useQuery, useQueryClient } from '@tanstack/react-query';
import ShootUploader, { countedWords, type UploadLimits, type UploaderSetup } from '../shoots/ShootUploader';
import { formatBytes } from '../shoots/frame-facts';
import { FinalsApiError, fetchFinals, finalsKey, matchFinal, removeFinal } from './api';
import HandOffPanel from './HandOffPanel';
import ShootEnd from './ShootEnd';
import DownloadsLog from './DownloadsLog';
import type { DeskFinal, FinalsDeskData, RetouchItem, UnmatchedFinal } from './types';
import ProgressBar from '../ui/ProgressBar';

interface Props {
  initial: FinalsDeskData;
  limits: Omit<UploadLimits, 'roomForFrames'>;
  /** A notice from the page after a change (hand-off, archive). */
  notice: string | null;
}

const FAST_MS = 1500;
const SLOW_MS = 30_000;

/** The Finals tab: the retouch list, the finals uploader, matching by hand, hand-off and the download log. */
export default function FinalsDesk(props: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 2, refetchOnWindowFocus: true, staleTime: 1000 } } }));
  return (
    <QueryClientProvider client={client}>
      <Desk {...props} />
    </QueryClientProvider>
  );
}

const pad = (n: number) => String(n).padStart(2, '0');

function Desk({ initial, limits, notice }: Props) {
  const shootId = initial.shootId;
  const queryClient = useQueryClient();
  const [uploading, setUploading] = useState(false);
  const [replacing, setReplacing] = useState(false);
  const [lastUploads, setLastUploads] = useState<{ name: string; outcome: string; pick: string | null }[]>([]);
  const query = useQuery({
    queryKey: finalsKey(shootId),
    queryFn: () => fetchFinals(shootId),
    initialData: initial,
    initialDataUpdatedAt: Date.now(),
    refetchInterval: (q) => {
      const d = q.state.data;
      return uploading || (d && d.counts.incoming > 0) ? FAST_MS : SLOW_MS;
    },
  });
  const data = query.data;
  const refresh = useCallback(() => void queryClient.invalidateQueries({ queryKey: finalsKey(shootId) }), [queryClient, shootId]);
  const timer = useRef<number | null>(null);
  const onRegistered = useCallback(
    (result: unknown, name: string) => {
      const r = result as { outcome?: string; pick?: { name: string } | null };
      setLastUploads((list) => [{ name, outcome: r.outcome ?? 'matched', pick: r.pick?.name ?? null }, ...list].slice(0, 50));
      if (timer.current !== null) return;
      timer.current = window.setTimeout(() => {
        timer.current = null;
        refresh();
      }, 300);
    },
    [refresh],
  );

  const setup = useMemo<UploaderSetup>(
    () => ({
      uppyId: `finals-${shootId}`,
      signUrl: `/api/shoots/${shootId}/finals/uploads/sign`,
      registerUrl: `/api/shoots/${shootId}/finals`,
      heading: 'Upload finals',
      intro: 'Keep each original’s name in the file name (HLP_2041-edit.jpg): Fillcard matches it to its pick. Others you match by hand below.',
      problemsHeading: (n) => (n === 1 ? '1 file was not taken' : `${n} files were not taken`),
      note: `Retouched JPEG, PNG, TIFF or WebP at full size, up to ${formatBytes(limits.maxBytes)} each. Delivered as sRGB JPEG with ratio crops made at each frame’s focus point.`,
      strings: countedWords('final', 'finals', { one: 'Matching %{smart_count} final', many: 'Matching %{smart_count} finals' }),
      restrictionStrings: { exceedsSize: '%{file} is larger than the %{size} a final may have' },
    }),
    [shootId, limits.maxBytes],
  );
  const [uploadLimits] = useState<UploadLimits>(() => ({ ...limits, roomForFrames: 1000 }));
  const waitingPicks = data.picks.filter((p) => !p.final && (!p.incoming || p.incoming.state === 'failed'));

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
      <div className="min-w-0 space-y-6">
        {notice ? <p className="notice-ok" role="status">{notice}</p> : null}
        {query.isError ? (
          <p className="notice-error" role="alert">
            The finals could not be refreshed: {(query.error as Error).message} Fillcard keeps trying.
          </p>
        ) : null}

        <section aria-labelledby="progress-heading" className="card p-4 sm:p-5">
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h2 id="progress-heading" className="text-title">Finals</h2>
            <p className="text-ink-soft" data-testid="finals-counts" aria-live="polite">
              <strong className="text-ink">{data.counts.ready}</strong> of {data.counts.picks} picks have a final
              {data.counts.incoming ? ` · ${data.counts.incoming} processing` : ''}
              {data.counts.failed ? <span className="font-semibold text-ember"> · {data.counts.failed} failed</span> : null}
              {data.counts.unmatched ? <span className="font-semibold text-amber"> · {data.counts.unmatched} to match</span> : null}
            </p>
          </div>
          <ProgressBar label="Picks with a final" value={data.counts.ready} max={data.counts.picks} segments={[{ value: data.counts.ready, className: 'bg-moss' }]} />
        </section>

        {/* On a phone the hand-off comes right after the progress; on a wide screen it sits in the side column. */}
        <div className="lg:hidden">
          <HandOffPanel data={data} onChanged={refresh} idSuffix="-narrow" />
        </div>

        {data.can.upload && (data.stage !== 'delivered' || replacing) ? (
          <ShootUploader shootId={shootId} limits={uploadLimits} onActivity={setUploading} onRegistered={onRegistered} setup={setup} />
        ) : data.can.upload ? (
          <section className="card flex flex-col gap-3 p-4 sm:flex-row sm:items-center sm:justify-between sm:p-5" aria-label="Replace a delivered final">
            <p className="min-w-0 flex-1 basis-64 text-ink-soft">
              Need to fix a delivered final? Upload a new version: the client sees it once it is ready, and the old one is removed.
            </p>
            <button type="button" className="btn-quiet" onClick={() => setReplacing(true)}>Upload a new version</button>
          </section>
        ) : data.uploadClosed && data.stage !== 'archived' ? (
          <p className="notice-caution">{data.uploadClosed}</p>
        ) : null}
        {lastUploads.length ? <UploadOutcomes list={lastUploads} onClear={() => setLastUploads([])} /> : null}

        {data.unmatched.length ? (
          <Unmatched shootId={shootId} files={data.unmatched} picks={data.picks} waiting={waitingPicks} canChange={data.can.upload} onChanged={refresh} />
        ) : null}

        <RetouchList shootId={shootId} picks={data.picks} stage={data.stage} canChange={data.can.upload} onChanged={refresh} />

        {data.downloads ? <DownloadsLog entries={data.downloads} /> : null}
      </div>

      <aside className="space-y-4">
        <div className="hidden lg:block">
          <HandOffPanel data={data} onChanged={refresh} />
        </div>
        {data.can.manage ? <ShootEnd shootId={shootId} title={data.title} stage={data.stage} /> : null}
        <p className="px-1 text-caption text-ink-faint">
          Finals are photos of people: personal data. They reach only the client of this shoot, through their viewing link, until the download date.
        </p>
      </aside>
    </div>
  );
}

const OUTCOME: Record<string, (pick: string | null) => string> = {
  matched: (p) => `matched to ${p}`,
  confirm: (p) => `${p} has a final already: confirm below to replace it`,
  unmatched: () => 'no pick has this name: match it by hand below',
};

function UploadOutcomes({ list, onClear }: { list: { name: string; outcome: string; pick: string | null }[]; onClear: () => void }) {
  return (
    <section aria-label="Files just uploaded" className="rounded-card border border-paper-edge bg-paper-deep/60 p-3" data-testid="upload-outcomes">
      <div className="flex items-center justify-between gap-2">
        <h3 className="font-sans text-body font-semibold">Just uploaded</h3>
        <button type="button" className="btn-quiet !min-h-[36px] !py-1" onClick={onClear}>Clear</button>
      </div>
      <ul className="mt-2 space-y-1 text-caption">
        {list.map((u, i) => (
          <li key={`${u.name}-${i}`} className="break-words">
            <span className="font-semibold">{u.name}</span>: {OUTCOME[u.outcome]?.(u.pick) ?? u.outcome}
          </li>
        ))}
      </ul>
    </section>
  );
}

// ---------------------------------------------------------------------------------------------

const STATE_CHIP: Record<RetouchItem['state'], { label: string; tone: string }> = {
  waiting: { label: 'Waiting for a final', tone: 'border-ink-faint/40 text-ink-soft' },
  processing: { label: 'Processing', tone: 'border-amber/40 bg-amber-light/60 text-amber' },
  ready: { label: 'Final ready', tone: 'border-moss/40 bg-moss-light text-moss' },
  failed: { label: 'Failed', tone: 'border-ember/40 bg-ember-light text-ember' },
};

function Thumb({ src, size = 'h-24 w-24' }: { src: { url: string; width: number; height: number } | null; size?: string }) {
  return src ? (
    <img src={src.url} alt="" width={src.width} height={src.height} loading="lazy" decoding="async" className={`${size} flex-none rounded-md bg-paper-deep object-cover`} />
  ) : (
    <div className={`${size} flex-none rounded-md bg-paper-deep`} aria-hidden="true" />
  );
}

function finalFacts(f: DeskFinal) {
  const size = f.width && f.height ? `${f.width} × ${f.height} px · ` : '';
  return `${size}${formatBytes(f.bytes)}${f.uploadedBy ? ` · ${f.uploadedBy}` : ''}`;
}

function RetouchList({ shootId, picks, stage, canChange, onChanged }: { shootId: string; picks: RetouchItem[]; stage: string; canChange: boolean; onChanged: () => void }) {
  const [busy, setBusy] = useState<string | null>(null);
  const [error, setError] = useState<Record<string, string>>({});
  async function remove(item: RetouchItem, final: DeskFinal) {
    setBusy(final.id);
    setError((e) => ({ ...e, [item.frameId]: '' }));
    try {
      await removeFinal(shootId, final.id);
      onChanged();
    } catch (err) {
      setError((e) => ({ ...e, [item.frameId]: err instanceof FinalsApiError ? err.message : 'That did not work. Please try again.' }));
    } finally {
      setBusy(null);
    }
  }
  if (!picks.length) {
    return (
      <section className="card flex flex-col items-center gap-2 px-6 py-12 text-center">
        <p className="font-display text-lead">No picks yet</p>
        <p className="max-w-sm text-ink-soft">When the client sends picks, they appear here with their notes, ready for retouching.</p>
      </section>
    );
  }
  return (
    <section aria-labelledby="retouch-heading">
      <h2 id="retouch-heading" className="text-title">{stage === 'delivered' || stage === 'archived' ? 'Picks and their finals' : 'Picks to retouch'}</h2>
      <ol className="mt-3 space-y-3" aria-labelledby="retouch-heading" data-testid="retouch-list">
        {picks.map((p) => {
          const chip = STATE_CHIP[p.state];
          const shown = p.incoming ?? p.final;
          return (
            <li key={p.frameId} className="card p-3 sm:p-4" data-testid="retouch-item" data-frame={p.name} data-state={p.state}>
              <div className="flex gap-3">
                <Thumb src={p.thumb} />
                <div className="min-w-0 flex-1">
                  <div className="flex flex-wrap items-baseline gap-x-2 gap-y-1">
                    <span className="text-caption text-ink-faint">{pad(p.number)}</span>
                    <span className="truncate font-semibold" title={p.name}>{p.name}</span>
                    <span className={`stage-chip ${chip.tone}`} data-testid="pick-state">{chip.label}</span>
                  </div>
                  {p.note ? (
                    <p className="mt-1 whitespace-pre-wrap break-words text-ink-soft"><span className="sr-only">Client’s note: </span>{p.note}</p>
                  ) : (
                    <p className="mt-1 text-caption italic text-ink-faint">No note from the client</p>
                  )}
                  <div className="mt-2 flex flex-wrap gap-2">
                    <a className="btn-quiet !min-h-[40px] !py-1.5 text-caption" href={`/api/frames/${p.frameId}/original`} download>
                      Original for editing
                    </a>
                    {p.final ? (
                      <a className="btn-quiet !min-h-[40px] !py-1.5 text-caption" href={`/api/shoots/${shootId}/finals/${p.final.id}/download?kind=full`} download>
                        Download final
                      </a>
                    ) : null}
                  </div>
                </div>
              </div>
              {shown ? (
                <div className="mt-3 flex flex-wrap items-center gap-3 border-t border-paper-edge pt-3">
                  <Thumb src={shown.thumb} size="h-14 w-14" />
                  <div className="min-w-0 flex-1 text-caption">
                    {p.final ? (
                      <p className="break-words"><span className="text-ink-faint">Final: </span><span className="font-semibold">{p.final.name}</span> · {finalFacts(p.final)}</p>
                    ) : null}
                    {p.incoming ? (
                      <p className="break-words">
                        <span className="text-ink-faint">{p.final ? 'New version: ' : 'Uploaded: '}</span>
                        <span className="font-semibold">{p.incoming.name}</span> ·{' '}
                        {p.incoming.state === 'failed' ? <span className="font-semibold text-ember">{p.incoming.error ?? 'Failed.'}</span> : 'being processed…'}
                      </p>
                    ) : null}
                    {error[p.frameId] ? <p className="mt-1 text-ember" role="alert">{error[p.frameId]}</p> : null}
                  </div>
                  {canChange && (p.incoming || (p.final && stage !== 'delivered')) ? (
                    <button type="button" className="btn-quiet !min-h-[40px] !py-1.5 text-caption" disabled={busy !== null}
                      onClick={() => remove(p, (p.incoming ?? p.final)!)}>
                      {p.incoming ? (p.incoming.state === 'failed' ? 'Dismiss' : 'Cancel new version') : 'Remove final'}
                    </button>
                  ) : null}
                </div>
              ) : null}
            </li>
          );
        })}
      </ol>
    </section>
  );
}

// ---------------------------------------------------------------------------------------------

function Unmatched({ shootId, files, picks, waiting, canChange, onChanged }: {
  shootId: string; files: UnmatchedFinal[]; picks: RetouchItem[]; waiting: RetouchItem[]; canChange: boolean; onChanged: () => void;
}) {
  return (
    <section aria-labelledby="unmatched-heading" className="card border-amber/40 p-4 sm:p-5" data-testid="unmatched">
      <h2 id="unmatched-heading" className="text-title">{files.length === 1 ? '1 file to match' : `${files.length} files to match`}</h2>
      <p className="mt-1 text-ink-soft">These finals found no pick on their own. Choose the pick each one belongs to.</p>
      <ul className="mt-4 space-y-4">
        {files.map((f) => (
          <UnmatchedItem key={f.id} shootId={shootId} file={f} picks={picks} waiting={waiting} canChange={canChange} onChanged={onChanged} />
        ))}
      </ul>
    </section>
  );
}

function UnmatchedItem({ shootId, file, picks, waiting, canChange, onChanged }: {
  shootId: string; file: UnmatchedFinal; picks: RetouchItem[]; waiting: RetouchItem[]; canChange: boolean; onChanged: () => void;
}) {
  const [choosing, setChoosing] = useState(false);
  const [showAll, setShowAll] = useState(false);
  const [confirm, setConfirm] = useState<{ frameId: string; message: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState('');
  const s = file.suggestion;

  async function run(fn: () => Promise<unknown>, frameId?: string) {
    setBusy(true);
    setError('');
    try {
      await fn();
      setConfirm(null);
      onChanged();
    } catch (err) {
      if (err instanceof FinalsApiError && err.needsConfirmation && frameId) setConfirm({ frameId, message: err.message });
      else setError(err instanceof FinalsApiError ? err.message : 'That did not work. Please try again.');
    } finally {
      setBusy(false);
    }
  }
  const match = (frameId: string, replace = false) => run(() => matchFinal(shootId, file.id, frameId, replace), frameId);
  const ambiguous = picks.filter((p) => file.ambiguous.includes(p.frameId));
  const choices = showAll ? picks : ambiguous.length ? ambiguous : waiting;

  return (
    <li className="rounded-card border border-paper-edge bg-paper/60 p-3" data-testid="unmatched-item" data-name={file.name}>
      <div className="flex flex-wrap items-start justify-between gap-2">
        <div className="min-w-0">
          <p className="break-words font-semibold">{file.name}</p>
          <p className="text-caption text-ink-faint">
            {formatBytes(file.bytes)}{file.uploadedBy ? ` · uploaded by ${file.uploadedBy}` : ''} ·{' '}
            <a href={`/api/shoots/${shootId}/finals/${file.id}/file`} target="_blank" rel="noopener" className="text-clay-dark underline">View the file</a>
          </p>
          {s && s.hasFinal ? (
            <p className="mt-1 text-ink-soft">Looks like a new version of <strong>{s.name}</strong> (frame {pad(s.number)}), which has a final already.</p>
          ) : s ? (
            <p className="mt-1 text-ink-soft">Looks like <strong>{s.name}</strong> (frame {pad(s.number)}).</p>
          ) : ambiguous.length ? (
            <p className="mt-1 text-ink-soft">{ambiguous.length} picks share this name. Choose the right one.</p>
          ) : (
            <p className="mt-1 text-ink-soft">No pick has a name like this.</p>
          )}
        </div>
        {canChange ? (
          <div className="flex flex-wrap gap-2">
            {s && !confirm ? (
              <button type="button" className="btn-accent !min-h-[40px] !py-1.5" disabled={busy} onClick={() => (s.hasFinal ? setConfirm({ frameId: s.frameId, message: `Replace the final of ${s.name} with “${file.name}”? The current one stays until the new one is ready, then it is deleted.` }) : match(s.frameId))}>
                {s.hasFinal ? 'Replace its final' : `Match to ${s.name}`}
              </button>
            ) : null}
            <button type="button" className="btn-quiet !min-h-[40px] !py-1.5" aria-expanded={choosing} onClick={() => setChoosing((c) => !c)}>
              {choosing ? 'Close' : 'Choose its pick'}
            </button>
            <button type="button" className="btn-quiet !min-h-[40px] !py-1.5 text-ember" disabled={busy} onClick={() => run(() => removeFinal(shootId, file.id))}>
              Remove
            </button>
          </div>
        ) : null}
      </div>
      {confirm ? (
        <div className="notice-caution mt-3" role="alertdialog" aria-label="Replace a final">
          <p>{confirm.message}</p>
          <div className="mt-2 flex flex-wrap gap-2">
            <button type="button" className="btn-accent !min-h-[40px] !py-1.5" disabled={busy} onClick={() => match(confirm.frameId, true)}>Yes, replace it</button>
            <button type="button" className="btn-quiet !min-h-[40px] !py-1.5" onClick={() => setConfirm(null)}>Keep the current one</button>
          </div>
        </div>
      ) : null}
      {error ? <p className="notice-error mt-3" role="alert">{error}</p> : null}
      {choosing && canChange ? (
        <div className="mt-3">
          <p className="text-caption text-ink-soft">{showAll ? 'All picks. Choosing one with a final replaces it, after you confirm.' : 'Picks still waiting for a final:'}</p>
          {choices.length ? (
            <ul className="mt-2 grid grid-cols-3 gap-2 sm:grid-cols-4 xl:grid-cols-6" aria-label={`Choose the pick for ${file.name}`}>
              {choices.map((p) => (
                <li key={p.frameId}>
                  <button type="button" disabled={busy} onClick={() => match(p.frameId)}
                    className="group w-full rounded-md border border-paper-edge bg-white p-1 text-left hover:border-clay focus:border-clay focus:outline-none focus:ring-2 focus:ring-clay/30"
                    aria-label={`Frame ${pad(p.number)}, ${p.name}${p.final ? ', has a final' : ''}`} data-testid="match-choice" data-frame={p.name}>
                    {p.thumb ? <img src={p.thumb.url} alt="" className="aspect-square w-full rounded bg-paper-deep object-cover" loading="lazy" /> : <div className="aspect-square w-full rounded bg-paper-deep" />}
                    <span className="mt-1 block truncate text-caption"><span className="text-ink-faint">{pad(p.number)}</span> {p.name}</span>
                    {p.final ? <span className="block text-caption text-moss">has a final</span> : null}
                  </button>
                </li>
              ))}
            </ul>
          ) : (
            <p className="mt-2 text-caption text-ink-faint">Every pick has a final already.</p>
          )}
          <button type="button" className="mt-1 inline-flex min-h-[44px] items-center text-caption text-clay-dark underline" onClick={() => setShowAll((v) => !v)}>
            {showAll ? 'Show only picks waiting for a final' : 'Show all picks'}
          </button>
        </div>
      ) : null}
    </li>
  );
}
