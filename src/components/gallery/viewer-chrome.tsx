/** What the full-screen viewer and the comparison share: the dark dialog and its title bar. */
import type { ReactNode } from 'react';
import { CloseMark } from './icons';

export const VIEWER_DIALOG_CLASS = 'm-0 h-[100dvh] max-h-none w-screen max-w-none border-0 bg-[#161d21] p-0 text-paper backdrop:bg-[#161d21]';

/** The dialog's title (its accessible name, by `titleId`) and the close button. */
export function ViewerHeader({ titleId, title, closeLabel, onClose }: { titleId: string; title: ReactNode; closeLabel: string; onClose: () => void }) {
  return (
    <header className="flex items-center gap-3 px-3 py-2 sm:px-4">
      <h2 id={titleId} className="min-w-0 flex-1 font-sans text-body text-paper">{title}</h2>
      <button type="button" onClick={onClose} className="btn !min-h-[44px] !px-3 text-paper hover:bg-white/10" aria-label={closeLabel}>
        <CloseMark /><span className="hidden sm:inline">Close</span>
      </button>
    </header>
  );
}
