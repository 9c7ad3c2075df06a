import { useMemo, useState } from 'react';
import { QueryClient, QueryClientProvider, useIsMutating, useQueryClient } from '@tanstack/react-query';
import { galleryKey, useGallery, usePickChange } from './gallery-api';
import PickTally from './PickTally';
import ProofViewer from './ProofViewer';
import CompareFrames from './CompareFrames';
import { CompareMark, NoteMark, PickMark } from './icons';
import type { GalleryData, GalleryFrame, GalleryPick } from '../../lib/schemas/picks';

interface Props {
  initial: GalleryData;
}

/** The client's gallery: proofs in a grid, a full-screen viewer, picks with notes, a running tally. */
export default function GalleryApp({ initial }: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1 }, mutations: { retry: 0 } } }));
  return (
    <QueryClientProvider client={client}>
      <Gallery initial={initial} />
    </QueryClientProvider>
  );
}

const when = (iso: string) => new Date(iso).toLocaleString('en-GB', { day: 'numeric', month: 'long', hour: '2-digit', minute: '2-digit' });

function Gallery({ initial }: Props) {
  const shootId = initial.shootId;
  const queryClient = useQueryClient();
  const { data } = useGallery(shootId, initial);
  const { change, error, clearError } = usePickChange(shootId);
  const saving = useIsMutating({ mutationKey: ['pick'] }) > 0;
  const [onlyPicks, setOnlyPicks] = useState(false);
  const [viewer, setViewer] = useState<{ ids: string[]; index: number } | null>(null);
  const [comparing, setComparing] = useState(false);
  const [chosen, setChosen] = useState<string[]>([]);
  const [pairOpen, setPairOpen] = useState(false);

  const frames = data.frames;
  const byId = useMemo(() => new Map(frames.map((f) => [f.id, f])), [frames]);
  const picks = useMemo(() => new Map<string, GalleryPick>(data.picks.map((p) => [p.frameId, p])), [data.picks]);
  const shown = onlyPicks ? frames.filter((f) => picks.has(f.id)) : frames;
  const canPick = data.canPick;

  const toggle = (frame: GalleryFrame, picked: boolean) => change({ frameId: frame.id, picked, name: frame.name });
  const saveNote = (frame: GalleryFrame, note: string) => {
    // A note typed just before un-picking must not pick the frame again; the cache, not this
    // render's picks, knows whether it is still picked when a closing note field saves.
    const current = queryClient.getQueryData<GalleryData>(galleryKey(shootId));
    if (current?.picks.some((p) => p.frameId === frame.id)) change({ frameId: frame.id, picked: true, note, name: frame.name });
  };
  // The viewer keeps the list it opened with, so un-picking under "Only my picks" does not pull the frame away.
  const open = (frameId: string) => setViewer({ ids: shown.map((f) => f.id), index: Math.max(0, shown.findIndex((f) => f.id === frameId)) });
  const viewerFrames = viewer ? viewer.ids.map((id) => byId.get(id)).filter((f): f is GalleryFrame => !!f) : [];

  const choose = (frameId: string) =>
    setChosen((c) => (c.includes(frameId) ? c.filter((id) => id !== frameId) : c.length >= 2 ? [c[1], frameId] : [...c, frameId]));
  const pair = chosen.length === 2 ? ([byId.get(chosen[0]), byId.get(chosen[1])] as const) : null;

  return (
    <div className="pb-4">
      {data.submittedAt ? (
        <div className={data.awaitingPayment ? 'notice-caution mb-4' : 'notice-ok mb-4'} role="status">
          {data.awaitingPayment ? (
            <p>Your picks are set aside. To send them to {data.studioName}, pay for the extra retouches on the <a href={`/gallery/${shootId}/review`}>review page</a>.</p>
          ) : (
            // The time reads in the browser's own zone, which the server cannot know.
            <p suppressHydrationWarning>Your picks were sent to {data.studioName} on {when(data.submittedAt)}. If you want to change them, ask the studio to reopen them.</p>
          )}
        </div>
      ) : !canPick ? (
        <p className="notice-caution mb-4" role="status">Picking is closed for this shoot. You can still look through the proofs.</p>
      ) : (
        <p className="mb-4 max-w-prose text-ink-soft">
          Open a proof to see it large. Pick the frames you would like retouched and tell the retoucher anything they should know in a note.
        </p>
      )}

      <div className="mb-3 flex flex-wrap items-center gap-2" role="toolbar" aria-label="Gallery view">
        <button type="button" aria-pressed={onlyPicks} onClick={() => setOnlyPicks((v) => !v)}
          className={`btn !min-h-[44px] !py-1.5 ${onlyPicks ? 'bg-ink text-paper hover:bg-ink-soft' : 'btn-quiet'}`}>
          <PickMark picked={onlyPicks} />
          Only my picks <span className="tabular-nums opacity-80">({picks.size})</span>
        </button>
        <button type="button" aria-pressed={comparing} data-compare-start
          onClick={() => { setComparing((v) => !v); setChosen([]); }}
          className={`btn !min-h-[44px] !py-1.5 ${comparing ? 'bg-ink text-paper hover:bg-ink-soft' : 'btn-quiet'}`}>
          <CompareMark />
          Compare two
        </button>
        {comparing ? (
          <span className="flex flex-wrap items-center gap-2">
            <span className="text-caption text-ink-soft" aria-live="polite">{chosen.length === 2 ? 'Two frames chosen.' : `Choose ${2 - chosen.length} more ${chosen.length === 1 ? 'frame' : 'frames'}.`}</span>
            <button type="button" className="btn-brand !min-h-[44px] !py-1.5" disabled={!pair} onClick={() => setPairOpen(true)}>Compare</button>
          </span>
        ) : null}
      </div>

      {frames.length === 0 ? (
        <div className="card px-6 py-14 text-center">
          <p className="font-display text-lead">No proofs here yet</p>
          <p className="text-ink-soft">{data.studioName} has not added proofs to this gallery yet. Please check back soon.</p>
        </div>
      ) : shown.length === 0 ? (
        <div className="card px-6 py-14 text-center">
          <p className="font-display text-lead">You have not picked any frames yet</p>
          <p className="text-ink-soft">Turn off “Only my picks” to see all {frames.length} proofs.</p>
        </div>
      ) : (
        <ul className="grid grid-cols-2 gap-2 sm:grid-cols-3 sm:gap-3 lg:grid-cols-4 xl:grid-cols-5" aria-label={onlyPicks ? 'Your picks' : 'Proofs'}>
          {shown.map((frame, i) => (
            <FrameTile
              key={frame.id}
              frame={frame}
              position={i + 1}
              total={shown.length}
              pick={picks.get(frame.id)}
              canPick={canPick}
              comparing={comparing}
              chosen={chosen.includes(frame.id)}
              onOpen={() => (comparing ? choose(frame.id) : open(frame.id))}
              onToggle={(picked) => toggle(frame, picked)}
            />
          ))}
        </ul>
      )}

      <div className="sticky bottom-0 z-20 -mx-4 mt-6 border-t border-paper-edge bg-white/95 px-4 py-3 backdrop-blur sm:mx-0 sm:rounded-card sm:border sm:shadow-card">
        {error ? (
          <div role="alert" className="notice-error mb-3 flex items-start justify-between gap-3 !py-2">
            <p className="text-caption">{error}</p>
            <button type="button" onClick={clearError} className="text-caption font-semibold underline">Dismiss</button>
          </div>
        ) : null}
        <div className="flex items-center justify-between gap-3">
          <PickTally picked={picks.size} terms={data.terms} compact paid={data.extrasPaid} />
          <a href={`/gallery/${shootId}/review`} className="btn-brand flex-none">
            {data.submittedAt ? 'Your picks' : 'Review & send'}
          </a>
        </div>
      </div>

      {viewer && viewerFrames.length ? (
        <ProofViewer
          frames={viewerFrames}
          index={Math.min(viewer.index, viewerFrames.length - 1)}
          picks={picks}
          canPick={canPick}
          saving={saving}
          onIndex={(index) => setViewer((v) => (v ? { ...v, index } : v))}
          onClose={() => setViewer(null)}
          onToggle={toggle}
          onNote={saveNote}
        />
      ) : null}
      {pairOpen && pair && pair[0] && pair[1] ? (
        <CompareFrames
          pair={[pair[0], pair[1]]}
          picks={picks}
          canPick={canPick}
          onClose={() => setPairOpen(false)}
          onKeep={(keep, drop) => {
            if (!picks.has(keep.id)) toggle(keep, true);
            if (picks.has(drop.id)) toggle(drop, false);
            setPairOpen(false);
            setComparing(false);
            setChosen([]);
          }}
        />
      ) : null}
    </div>
  );
}

interface TileProps {
  frame: GalleryFrame;
  position: number;
  total: number;
  pick: GalleryPick | undefined;
  canPick: boolean;
  comparing: boolean;
  chosen: boolean;
  onOpen: () => void;
  onToggle: (picked: boolean) => void;
}

function FrameTile({ frame, position, total, pick, canPick, comparing, chosen, onOpen, onToggle }: TileProps) {
  const picked = !!pick;
  const ring = chosen ? 'ring-4 ring-ink' : picked ? 'ring-[3px] ring-brand' : 'ring-1 ring-paper-edge';
  return (
    <li className="min-w-0">
      <div className={`group relative overflow-hidden rounded-card bg-paper-deep ${ring}`}>
        <button
          type="button"
          data-open-frame={frame.id}
          onClick={onOpen}
          aria-pressed={comparing ? chosen : undefined}
          aria-label={comparing ? `Choose ${frame.name} to compare` : `View ${frame.name}, ${position} of ${total}${picked ? ', picked' : ''}${pick?.note ? ', has a note' : ''}`}
          className="block aspect-square w-full focus-visible:outline-offset-[-4px]"
        >
          <img
            src={frame.thumb.url}
            srcSet={`${frame.thumb.url} ${frame.thumb.width}w, ${frame.proof.url} ${frame.proof.width}w`}
            sizes="(min-width: 1280px) 220px, (min-width: 1024px) 25vw, (min-width: 640px) 33vw, 50vw"
            width={frame.thumb.width}
            height={frame.thumb.height}
            loading="lazy"
            decoding="async"
            alt=""
            className="h-full w-full object-contain p-1.5 transition-transform duration-200 group-hover:scale-[1.02]"
          />
        </button>
        {canPick && !comparing ? (
          <button
            type="button"
            aria-pressed={picked}
            aria-label={`Pick ${frame.name}`}
            onClick={() => onToggle(!picked)}
            className={`absolute right-1.5 top-1.5 inline-flex min-h-[44px] min-w-[44px] items-center justify-center gap-1 rounded-full px-2.5 text-caption font-semibold shadow-card ${picked ? 'bg-brand text-white' : 'bg-white/90 text-ink hover:bg-white'}`}
          >
            <PickMark picked={picked} />
            <span className="hidden sm:inline">Pick</span>
          </button>
        ) : picked ? (
          <span className="absolute right-2 top-2 rounded-full p-1 text-white shadow-card bg-brand" aria-hidden="true"><PickMark picked /></span>
        ) : null}
        {comparing && chosen ? <span className="absolute left-2 top-2 rounded-full bg-ink px-2 py-0.5 text-caption font-semibold text-paper" aria-hidden="true">Chosen</span> : null}
      </div>
      <p className="mt-1 flex items-center gap-1.5 px-0.5 text-caption text-ink-faint">
        <span className="tabular-nums">{position}</span>
        <span aria-hidden="true">·</span>
        <span className="truncate" title={frame.name}>{frame.name}</span>
        {pick?.note ? <NoteMark className="ml-auto flex-none text-ink-soft" /> : null}
      </p>
    </li>
  );
}
