/** What the full-screen viewer and the comparison share: the dark dialog and its close button. */
import { CloseMark } from './icons';

export const VIEWER_DIALOG_CLASS = 'm-0 h-[100dvh] max-h-none w-screen max-w-none border-0 bg-[#161d21] p-0 text-paper backdrop:bg-[#161d21]';

export function ViewerCloseButton({ label, onClick }: { label: string; onClick: () => void }) {
  return (
    <button type="button" onClick={onClick} className="btn !min-h-[44px] !px-3 text-paper hover:bg-white/10" aria-label={label}>
      <CloseMark /><span className="hidden sm:inline">Close</span>
    </button>
  );
}
