import { useEffect, useId, useRef } from 'react';
import { useModal } from './use-modal';
import { PickMark } from './icons';
import type { GalleryFrame, GalleryPick } from '../../lib/schemas/picks';
import { VIEWER_DIALOG_CLASS, ViewerHeader } from './viewer-chrome';

interface Props {
  pair: [GalleryFrame, GalleryFrame];
  picks: ReadonlyMap<string, GalleryPick>;
  canPick: boolean;
  /** Keep `keep` in the picks and take `drop` out. */
  onKeep: (keep: GalleryFrame, drop: GalleryFrame) => void;
  onClose: () => void;
}

/** Two frames side by side (one above the other on a narrow phone), to choose between near twins. */
export default function CompareFrames({ pair, picks, canPick, onKeep, onClose }: Props) {
  const titleId = useId();
  const { ref, trapTab } = useModal(onClose, () => document.querySelector<HTMLElement>('[data-compare-start]'));
  const firstAction = useRef<HTMLButtonElement>(null);
  useEffect(() => firstAction.current?.focus(), []);

  return (
    <dialog ref={ref} aria-labelledby={titleId} onKeyDown={trapTab} className={VIEWER_DIALOG_CLASS}>
      <div className="flex h-full flex-col">
        <ViewerHeader titleId={titleId} title={<span className="font-semibold">Compare two frames</span>} closeLabel="Close the comparison" onClose={onClose} />
        <div className="grid min-h-0 flex-1 grid-rows-2 gap-2 px-2 pb-2 sm:grid-cols-2 sm:grid-rows-1 sm:gap-4 sm:px-4 sm:pb-4">
          {pair.map((frame, i) => {
            const other = pair[1 - i];
            const picked = picks.has(frame.id);
            return (
              <figure key={frame.id} className="flex min-h-0 flex-col rounded-card bg-black/20 p-2" aria-label={`${i === 0 ? 'First' : 'Second'}: ${frame.name}`}>
                <div className="relative min-h-0 flex-1">
                  <img
                    src={frame.proof.url}
                    width={frame.proof.width}
                    height={frame.proof.height}
                    alt={`Proof of ${frame.name}`}
                    className="absolute inset-0 m-auto h-auto max-h-full w-auto max-w-full object-contain"
                  />
                </div>
                <figcaption className="mt-2 flex flex-wrap items-center justify-between gap-2">
                  <span className="min-w-0 truncate text-caption text-paper/80">
                    {frame.name}{picked ? ' · in your picks' : ''}
                  </span>
                  {canPick ? (
                    <button
                      ref={i === 0 ? firstAction : undefined}
                      type="button"
                      onClick={() => onKeep(frame, other)}
                      className="btn-brand !min-h-[44px]"
                    >
                      <PickMark picked={picked} />
                      {picked ? 'Keep this one' : 'Pick this one'}
                    </button>
                  ) : null}
                </figcaption>
              </figure>
            );
          })}
        </div>
        {canPick ? <p className="px-4 pb-3 text-center text-caption text-paper/60">Picking one takes the other out of your picks.</p> : null}
      </div>
    </dialog>
  );
}
