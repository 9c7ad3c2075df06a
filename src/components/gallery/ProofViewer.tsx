import { useEffect, useId, useRef, useState, type KeyboardEvent, type PointerEvent } from 'react';
import { useModal } from './use-modal';
import { frameSteps } from '../ui/frame-steps';
import { Chevron, PickMark } from './icons';
import { MAX_NOTE, type GalleryFrame, type GalleryPick } from '../../lib/schemas/picks';
import { VIEWER_DIALOG_CLASS, ViewerHeader } from './viewer-chrome';

interface Props {
  frames: GalleryFrame[];
  index: number;
  picks: ReadonlyMap<string, GalleryPick>;
  canPick: boolean;
  saving: boolean;
  onIndex: (index: number) => void;
  onClose: (lastFrameId: string) => void;
  onToggle: (frame: GalleryFrame, picked: boolean) => void;
  onNote: (frame: GalleryFrame, note: string) => void;
}

/** A swipe must travel this far sideways (CSS px), and more sideways than up or down. */
const SWIPE_PX = 48;
const NOTE_DEBOUNCE_MS = 900;

/** The full-screen proof viewer: arrows and swipes move between frames, with the pick and note beside the proof. */
export default function ProofViewer({ frames, index, picks, canPick, saving, onIndex, onClose, onToggle, onNote }: Props) {
  const frame = frames[index];
  const titleId = useId();
  const lastFrameId = useRef(frame.id);
  lastFrameId.current = frame.id;
  const { ref, trapTab } = useModal(
    () => onClose(lastFrameId.current),
    () => document.querySelector<HTMLElement>(`[data-open-frame="${lastFrameId.current}"]`),
  );
  const toggleRef = useRef<HTMLButtonElement>(null);
  const swipe = useRef<{ x: number; y: number; id: number } | null>(null);
  const pick = picks.get(frame.id);
  const { go, onArrowKey, hasPrev, hasNext } = frameSteps(index, frames.length, onIndex);

  useEffect(() => {
    toggleRef.current?.focus();
  }, []);

  // Warm the neighbours so moving on shows a proof at once.
  useEffect(() => {
    for (const n of [frames[index + 1], frames[index - 1]]) {
      if (n) {
        const img = new Image();
        img.src = n.proof.url;
      }
    }
  }, [index, frames]);

  const onKeyDown = (e: KeyboardEvent<HTMLDialogElement>) => {
    trapTab(e);
    onArrowKey(e);
  };

  const onPointerDown = (e: PointerEvent) => {
    if (e.pointerType === 'mouse' && e.button !== 0) return;
    swipe.current = { x: e.clientX, y: e.clientY, id: e.pointerId };
  };
  const onPointerUp = (e: PointerEvent) => {
    const start = swipe.current;
    swipe.current = null;
    if (!start || start.id !== e.pointerId) return;
    const dx = e.clientX - start.x;
    const dy = e.clientY - start.y;
    if (Math.abs(dx) >= SWIPE_PX && Math.abs(dx) > Math.abs(dy) * 1.5) go(dx < 0 ? 1 : -1);
  };

  return (
    <dialog ref={ref} aria-labelledby={titleId} onKeyDown={onKeyDown} className={VIEWER_DIALOG_CLASS}>
      <div className="flex h-full flex-col lg:flex-row">
        <div className="flex min-h-0 flex-1 flex-col">
          <ViewerHeader
            titleId={titleId}
            title={<>
              <span className="font-semibold tabular-nums" data-testid="viewer-counter">{index + 1} of {frames.length}</span>
              <span className="ml-2 truncate text-caption text-paper/70">{frame.name}</span>
            </>}
            closeLabel="Close the viewer"
            onClose={() => onClose(frame.id)}
          />
          <div
            className="relative min-h-0 flex-1 select-none"
            style={{ touchAction: 'pan-y pinch-zoom' }}
            onPointerDown={onPointerDown}
            onPointerUp={onPointerUp}
            onPointerCancel={() => (swipe.current = null)}
          >
            {/* Always the watermarked proof here, never the small thumbnail, whatever the screen. */}
            <img
              key={frame.id}
              src={frame.proof.url}
              width={frame.proof.width}
              height={frame.proof.height}
              alt={`Proof of ${frame.name}, frame ${index + 1} of ${frames.length}`}
              draggable={false}
              className="absolute inset-0 m-auto h-auto max-h-full w-auto max-w-full object-contain p-1 sm:p-4"
            />
            <button type="button" onClick={() => go(-1)} disabled={!hasPrev} aria-label="Previous frame"
              className="absolute left-1 top-1/2 flex h-14 w-11 -translate-y-1/2 items-center justify-center rounded-card bg-black/35 text-paper hover:bg-black/55 disabled:opacity-0 sm:left-3 sm:w-12">
              <Chevron dir="left" />
            </button>
            <button type="button" onClick={() => go(1)} disabled={!hasNext} aria-label="Next frame"
              className="absolute right-1 top-1/2 flex h-14 w-11 -translate-y-1/2 items-center justify-center rounded-card bg-black/35 text-paper hover:bg-black/55 disabled:opacity-0 sm:right-3 sm:w-12">
              <Chevron dir="right" />
            </button>
          </div>
        </div>

        <aside className="border-t border-white/10 bg-[#1e272c] px-3 pb-[max(0.75rem,env(safe-area-inset-bottom))] pt-3 sm:px-4 lg:w-[22rem] lg:border-l lg:border-t-0 lg:pt-16">
          {canPick ? (
            <button
              ref={toggleRef}
              type="button"
              aria-pressed={!!pick}
              aria-label={`Pick ${frame.name}`}
              onClick={() => onToggle(frame, !pick)}
              className={`btn w-full text-lead ${pick ? 'bg-brand text-white' : 'border border-white/30 text-paper hover:bg-white/10'}`}
            >
              <PickMark picked={!!pick} />
              Pick
            </button>
          ) : (
            <p ref={toggleRef as never} tabIndex={-1} className="rounded-card bg-white/5 px-3 py-2 text-paper/80">
              {pick ? 'In your picks.' : 'Not in your picks.'}
            </p>
          )}
          <p className="mt-2 text-caption text-paper/70" aria-hidden="true">{pick ? 'In your picks' : 'Not picked'}</p>
          <div className="mt-3">
            {pick && canPick ? (
              <NoteField key={frame.id} frame={frame} note={pick.note} saving={saving} onSave={onNote} />
            ) : pick?.note ? (
              <div>
                <p className="label !text-paper/70">Your note</p>
                <p className="whitespace-pre-wrap break-words text-paper/90">{pick.note}</p>
              </div>
            ) : canPick ? (
              <p className="text-caption text-paper/60">Pick this frame to leave a note for the retoucher.</p>
            ) : null}
          </div>
          <p className="mt-4 hidden text-caption text-paper/50 lg:block">Arrow keys move between frames; Esc closes.</p>
        </aside>
      </div>
    </dialog>
  );
}

interface NoteProps {
  frame: GalleryFrame;
  note: string;
  saving: boolean;
  onSave: (frame: GalleryFrame, note: string) => void;
}

/** The note on one pick: saved a moment after typing stops, on leaving the field, and when moving to another frame. */
function NoteField({ frame, note, saving, onSave }: NoteProps) {
  const id = useId();
  const [value, setValue] = useState(note);
  const saved = useRef(note);
  const timer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const latest = useRef({ value, frame, onSave });
  latest.current = { value, frame, onSave };

  // A note changed on another device arrives with a refresh; take it when this field holds nothing unsaved.
  useEffect(() => {
    if (value === saved.current && note !== saved.current) {
      saved.current = note;
      setValue(note);
    }
  }, [note]); // eslint-disable-line react-hooks/exhaustive-deps

  const flush = () => {
    clearTimeout(timer.current);
    const { value: v, frame: f, onSave: save } = latest.current;
    if (v !== saved.current) {
      saved.current = v;
      save(f, v);
    }
  };
  useEffect(() => () => flush(), []); // eslint-disable-line react-hooks/exhaustive-deps

  const dirty = value !== saved.current;
  return (
    <div>
      <label htmlFor={id} className="label !text-paper/70">Note for the retoucher</label>
      <textarea
        id={id}
        value={value}
        maxLength={MAX_NOTE}
        rows={3}
        onChange={(e) => {
          setValue(e.target.value);
          clearTimeout(timer.current);
          timer.current = setTimeout(flush, NOTE_DEBOUNCE_MS);
        }}
        onBlur={flush}
        aria-describedby={`${id}-state`}
        placeholder="e.g. soften the shadow under the chin"
        className="block w-full rounded-card border border-white/20 bg-black/25 px-3 py-2 text-paper placeholder:text-paper/40 focus:border-brand focus:outline-none focus:ring-2 focus:ring-white/30"
      />
      <p id={`${id}-state`} className="mt-1 flex justify-between text-caption text-paper/60">
        <span>{dirty ? 'Not saved yet' : saving ? 'Saving…' : 'Saved'}</span>
        <span className="tabular-nums">{value.length} / {MAX_NOTE}</span>
      </p>
    </div>
  );
}
