import { useEffect, useRef, useState, type KeyboardEvent, type PointerEvent } from 'react';
import type { FrameDto, VariantKind } from '../../lib/dto';
import { RATIOS, cropRect, type FocusPoint } from '../../lib/ratios';
import { ApiError, deleteFrame, patchFrame } from './api';
import { frameFacts } from './frame-facts';
import { frameSteps } from '../ui/frame-steps';

interface Props {
  frames: FrameDto[];
  index: number;
  canEdit: boolean;
  onClose: () => void;
  onNavigate: (index: number) => void;
  onChanged: () => void;
}

const SOCIAL = RATIOS.filter((r) => r.key !== 'print_8x10') as ((typeof RATIOS)[number] & { key: VariantKind })[];
const STEP = 0.02;
const BIG_STEP = 0.1;

const clamp01 = (v: number) => Math.min(1, Math.max(0, v));
const near = (a: FocusPoint, b: FocusPoint) => Math.abs(a.x - b.x) < 1e-6 && Math.abs(a.y - b.y) < 1e-6;
const pct = (v: number) => `${Math.round(v * 100)}%`;

/**
 * One frame up close: the proof with its focus point and the crops it gives, the camera settings,
 * and the owner's actions. A dialog: Esc closes it, the arrow keys move between frames.
 */
export default function FramePanel({ frames, index, canEdit, onClose, onNavigate, onChanged }: Props) {
  const frame = frames[index]!;
  const dialogRef = useRef<HTMLDialogElement>(null);
  const [pending, setPending] = useState<FocusPoint | null>(null);
  const [status, setStatus] = useState<{ tone: 'ok' | 'error'; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const [confirmDelete, setConfirmDelete] = useState(false);

  useEffect(() => {
    const d = dialogRef.current;
    if (d && !d.open) d.showModal();
    return () => d?.close();
  }, []);

  // A new frame starts clean.
  useEffect(() => {
    setPending(null);
    setStatus(null);
    setConfirmDelete(false);
  }, [frame.id]);

  // Once the saved point is the one placed, there is nothing pending any more.
  useEffect(() => {
    if (pending && frame.focus && near(pending, frame.focus)) setPending(null);
  }, [pending, frame.focus]);

  const focus = pending ?? frame.focus ?? { x: 0.5, y: 0.5 };
  const editable = canEdit && frame.state === 'ready';
  const { go, onArrowKey, hasPrev, hasNext } = frameSteps(index, frames.length, onNavigate);

  async function run(action: () => Promise<unknown>, done: string) {
    setBusy(true);
    setStatus(null);
    try {
      await action();
      setStatus({ tone: 'ok', text: done });
      onChanged();
      return true;
    } catch (err) {
      setStatus({ tone: 'error', text: err instanceof ApiError ? err.message : 'That did not work. Please try again.' });
      return false;
    } finally {
      setBusy(false);
    }
  }

  const saveFocus = () => pending && run(() => patchFrame(frame.id, { focus: pending }), 'Focus point saved. The crops are being made again around it.');
  const toggleHidden = () =>
    run(() => patchFrame(frame.id, { hidden: !frame.hidden }), frame.hidden ? 'The client will see this frame again.' : 'Hidden: the client will not see this frame.');
  async function remove() {
    const ok = await run(() => deleteFrame(frame.id), 'Frame deleted.');
    if (!ok) return;
    if (frames.length <= 1) onClose();
    else onNavigate(index < frames.length - 1 ? index + 1 : index - 1);
  }

  return (
    <dialog
      ref={dialogRef}
      aria-labelledby="frame-panel-title"
      onCancel={(e) => {
        e.preventDefault();
        onClose();
      }}
      onKeyDown={onArrowKey}
      onClick={(e) => {
        if (e.target === dialogRef.current) onClose();
      }}
      className="m-0 h-full max-h-none w-full max-w-none bg-transparent p-0 backdrop:bg-ink/70 sm:m-auto sm:h-auto sm:max-h-[94vh] sm:w-[min(1180px,96vw)]"
      data-testid="frame-panel"
    >
      <div className="flex h-full flex-col overflow-hidden bg-paper sm:max-h-[94vh] sm:rounded-card sm:shadow-card">
        <header className="flex items-center gap-2 border-b border-paper-edge bg-white px-3 py-2 sm:px-4">
          <div className="min-w-0 flex-1">
            <h2 id="frame-panel-title" className="truncate font-display text-lead">
              {frame.name}
            </h2>
            <p className="text-caption text-ink-faint">
              Frame {index + 1} of {frames.length}
              {frame.hidden ? ' · hidden from the client' : ''}
            </p>
          </div>
          <button type="button" className="btn-quiet !px-3" onClick={() => go(-1)} disabled={!hasPrev} aria-label="Previous frame">
            <span aria-hidden="true">←</span>
          </button>
          <button type="button" className="btn-quiet !px-3" onClick={() => go(1)} disabled={!hasNext} aria-label="Next frame">
            <span aria-hidden="true">→</span>
          </button>
          <button type="button" className="btn-primary !px-3" onClick={onClose} aria-label="Close">
            <span aria-hidden="true">✕</span>
          </button>
        </header>

        <div className="grid flex-1 gap-4 overflow-y-auto p-3 sm:p-4 lg:grid-cols-[minmax(0,1fr)_300px]">
          <div className="min-w-0 space-y-4">
            {frame.state === 'ready' && frame.urls.proof && frame.width && frame.height ? (
              <>
                <FocusEditor frame={frame} focus={focus} editable={editable} onMove={setPending} />
                {/* The proof carries the watermark; focus is judged on the original, at full size. */}
                {/\.(jpe?g|png|webp)$/i.test(frame.name) ? (
                  <a className="btn-quiet" href={`/api/frames/${frame.id}/original?view=1`} target="_blank" rel="noopener">
                    Open the original at full size (new tab)
                  </a>
                ) : null}
              </>
            ) : (
              <div className="flex aspect-[3/2] items-center justify-center rounded-card border border-paper-edge bg-paper-deep p-6 text-center">
                <p className={frame.state === 'failed' ? 'text-ember' : 'text-ink-soft'}>
                  {frame.state === 'failed' ? frame.error ?? 'This frame could not be processed.' : 'The proof is being built. It appears here in a moment.'}
                </p>
              </div>
            )}
            {frame.state === 'ready' ? (
              <div>
                <div className="flex flex-wrap items-center justify-between gap-2">
                  <h3 className="font-sans text-body font-semibold">Ratio crops</h3>
                  {editable ? (
                    <div className="flex gap-2">
                      {pending ? (
                        <button type="button" className="btn-quiet !min-h-[40px] !py-1.5" onClick={() => setPending(null)} disabled={busy}>
                          Undo
                        </button>
                      ) : null}
                      <button type="button" className="btn-accent !min-h-[40px] !py-1.5" onClick={saveFocus} disabled={!pending || busy}>
                        Save focus point
                      </button>
                    </div>
                  ) : null}
                </div>
                <p className="mt-1 text-caption text-ink-faint">
                  {editable
                    ? 'Click or drag on the proof to move the focus point, or use the arrow keys on the point. Every crop centres on it as far as the frame allows.'
                    : 'Each crop centres on the frame’s focus point as far as the frame allows.'}
                </p>
                <ul className="mt-3 flex flex-wrap items-end gap-3" data-testid="crops">
                  {SOCIAL.map((r) => (
                    <li key={r.key} className="text-center">
                      <span
                        className="relative block h-[104px] overflow-hidden rounded-card border border-paper-edge bg-paper-deep sm:h-[136px]"
                        style={{ aspectRatio: `${r.w} / ${r.h}` }}
                      >
                        {frame.urls[r.key] ? (
                          <img
                            src={frame.urls[r.key]}
                            alt={`${r.label} crop`}
                            width={Math.round((136 * r.w) / r.h)}
                            height={136}
                            className={['h-full w-full object-cover', frame.cropsPending ? 'opacity-40' : ''].join(' ')}
                            data-crop={r.key}
                          />
                        ) : null}
                        {frame.cropsPending ? (
                          <span className="absolute inset-0 flex items-center justify-center text-caption font-semibold text-ink" data-testid="crops-pending">
                            New crop…
                          </span>
                        ) : null}
                      </span>
                      <span className="mt-1 block text-caption text-ink-soft">{r.label}</span>
                    </li>
                  ))}
                </ul>
              </div>
            ) : null}
          </div>

          <aside className="space-y-4">
            <div aria-live="polite" className="min-h-0">
              {status ? (
                <p className={status.tone === 'ok' ? 'notice-ok text-caption' : 'notice-error text-caption'} role={status.tone === 'error' ? 'alert' : 'status'}>
                  {status.text}
                </p>
              ) : null}
            </div>
            <section aria-labelledby="frame-settings-heading">
              <h3 id="frame-settings-heading" className="font-sans text-body font-semibold">
                Camera settings
              </h3>
              <dl className="mt-2 grid grid-cols-[auto_minmax(0,1fr)] gap-x-3 gap-y-1.5 text-body" data-testid="frame-facts">
                {frameFacts(frame).map((fact) => (
                  <div key={fact.label} className="contents">
                    <dt className="text-ink-faint">{fact.label}</dt>
                    <dd className="break-words text-ink" data-fact={fact.label}>
                      {fact.value}
                    </dd>
                  </div>
                ))}
              </dl>
              {frame.state === 'ready' && frame.exposureTimeS === null && frame.fNumber === null ? (
                <p className="mt-2 text-caption text-ink-faint">This file carries no camera settings; its EXIF was removed on export.</p>
              ) : null}
            </section>
            {canEdit ? (
              <section aria-label="Frame actions" className="space-y-2 border-t border-paper-edge pt-4">
                <button type="button" className="btn-quiet w-full" onClick={toggleHidden} disabled={busy}>
                  {frame.hidden ? 'Show to the client' : 'Hide from the client'}
                </button>
                {confirmDelete ? (
                  <div className="rounded-card border border-ember/30 bg-ember-light/50 p-3" role="group" aria-label="Confirm delete">
                    <p className="text-ink">Delete {frame.name}? The file, its proof and its crops are removed for good.</p>
                    <div className="mt-2 flex gap-2">
                      <button type="button" className="btn-danger flex-1" onClick={remove} disabled={busy}>
                        Delete frame
                      </button>
                      <button type="button" className="btn-quiet flex-1" onClick={() => setConfirmDelete(false)} autoFocus>
                        Keep it
                      </button>
                    </div>
                  </div>
                ) : (
                  <button type="button" className="btn-quiet w-full text-ember" onClick={() => setConfirmDelete(true)} disabled={busy}>
                    Delete…
                  </button>
                )}
              </section>
            ) : null}
            <p className="text-caption text-ink-faint">← → move between frames · Esc closes</p>
          </aside>
        </div>
      </div>
    </dialog>
  );
}

/** The proof with the focus point and the outline of each crop around it. */
function FocusEditor({ frame, focus, editable, onMove }: { frame: FrameDto; focus: FocusPoint; editable: boolean; onMove: (p: FocusPoint) => void }) {
  const areaRef = useRef<HTMLDivElement>(null);
  const dragging = useRef<number | null>(null);
  const w = frame.width!;
  const h = frame.height!;

  function pointFrom(e: PointerEvent) {
    const box = areaRef.current!.getBoundingClientRect();
    return { x: clamp01((e.clientX - box.left) / box.width), y: clamp01((e.clientY - box.top) / box.height) };
  }
  function onKey(e: KeyboardEvent) {
    const step = e.shiftKey ? BIG_STEP : STEP;
    const moves: Record<string, [number, number]> = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] };
    const m = moves[e.key];
    if (!m) return;
    // The arrows move the point here, not to the next frame.
    e.preventDefault();
    e.stopPropagation();
    onMove({ x: clamp01(focus.x + m[0]), y: clamp01(focus.y + m[1]) });
  }

  return (
    <div className="relative mx-auto" style={{ aspectRatio: `${w} / ${h}`, width: `min(100%, calc(54vh * ${w / h}))` }}>
      <img src={frame.urls.proof} alt={`Proof of ${frame.name}`} width={w} height={h} className="absolute inset-0 h-full w-full rounded-card object-contain" draggable={false} />
      <div
        ref={areaRef}
        className={['absolute inset-0', editable ? 'cursor-crosshair touch-none' : ''].join(' ')}
        data-testid="focus-area"
        onPointerDown={(e) => {
          if (!editable || e.button !== 0) return;
          dragging.current = e.pointerId;
          e.currentTarget.setPointerCapture(e.pointerId);
          onMove(pointFrom(e));
        }}
        onPointerMove={(e) => {
          if (dragging.current === e.pointerId) onMove(pointFrom(e));
        }}
        onPointerUp={(e) => {
          if (dragging.current === e.pointerId) dragging.current = null;
        }}
        onPointerCancel={() => {
          dragging.current = null;
        }}
      >
        {SOCIAL.map((r, i) => {
          const rect = cropRect(w, h, r.w, r.h, focus);
          // Crops often share an edge; each label sits in its own corner so none hides another.
          const corner = ['left-1 top-1', 'bottom-1 left-1', 'right-1 top-1'][i];
          return (
            <span
              key={r.key}
              aria-hidden="true"
              className="pointer-events-none absolute border border-white/80 shadow-[0_0_0_1px_rgba(31,42,48,0.45)]"
              style={{ left: `${(rect.left / w) * 100}%`, top: `${(rect.top / h) * 100}%`, width: `${(rect.width / w) * 100}%`, height: `${(rect.height / h) * 100}%` }}
            >
              <span className={`absolute ${corner} rounded bg-ink/70 px-1 text-[0.65rem] font-semibold leading-4 text-white`}>{r.label.split(' ')[0]}</span>
            </span>
          );
        })}
        <button
          type="button"
          className="absolute h-9 w-9 -translate-x-1/2 -translate-y-1/2 rounded-full border-[3px] border-white bg-clay/40 shadow-[0_0_0_2px_rgba(31,42,48,0.6)] focus-visible:outline focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-white disabled:cursor-default"
          style={{ left: `${focus.x * 100}%`, top: `${focus.y * 100}%` }}
          aria-label={`Focus point, ${pct(focus.x)} across and ${pct(focus.y)} down.${editable ? ' Arrow keys move it; with Shift, further.' : ''}`}
          onKeyDown={editable ? onKey : undefined}
          onPointerDown={(e) => {
            // Let the area below take the drag; keyboard focus stays on the point.
            if (!editable) e.preventDefault();
          }}
          disabled={!editable}
          data-testid="focus-point"
          data-x={focus.x.toFixed(3)}
          data-y={focus.y.toFixed(3)}
        >
          <span className="absolute left-1/2 top-1/2 h-1.5 w-1.5 -translate-x-1/2 -translate-y-1/2 rounded-full bg-white" aria-hidden="true" />
        </button>
      </div>
    </div>
  );
}
