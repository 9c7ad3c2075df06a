/** Fillcard's own small glyphs for the gallery, drawn on a 20-unit grid. */
interface IconProps { className?: string }

/** A picked frame: a check inside a rounded square, like a ticked box on a contact sheet. The check takes the studio colour. */
export function PickMark({ picked, className }: IconProps & { picked: boolean }) {
  return (
    <svg viewBox="0 0 20 20" width="20" height="20" aria-hidden="true" className={className}>
      <rect x="2.5" y="2.5" width="15" height="15" rx="4" fill={picked ? 'currentColor' : 'none'} stroke="currentColor" strokeWidth="1.6" />
      {picked ? <path d="M6 10.4l2.6 2.6L14.2 7.2" fill="none" style={{ stroke: 'var(--brand, #a4492b)' }} strokeWidth="2.2" strokeLinecap="round" strokeLinejoin="round" /> : null}
    </svg>
  );
}

export function NoteMark({ className }: IconProps) {
  return (
    <svg viewBox="0 0 20 20" width="16" height="16" aria-hidden="true" className={className}>
      <path d="M4 3.5h9l3 3v10H4z" fill="currentColor" opacity=".18" stroke="currentColor" strokeWidth="1.4" strokeLinejoin="round" />
      <path d="M7 9h6M7 12h4" stroke="currentColor" strokeWidth="1.4" strokeLinecap="round" />
    </svg>
  );
}

export function Chevron({ dir, className }: IconProps & { dir: 'left' | 'right' }) {
  return (
    <svg viewBox="0 0 20 20" width="24" height="24" aria-hidden="true" className={className}>
      <path d={dir === 'left' ? 'M12.5 4.5L7 10l5.5 5.5' : 'M7.5 4.5L13 10l-5.5 5.5'} fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round" />
    </svg>
  );
}

export function CloseMark({ className }: IconProps) {
  return (
    <svg viewBox="0 0 20 20" width="20" height="20" aria-hidden="true" className={className}>
      <path d="M5 5l10 10M15 5L5 15" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
    </svg>
  );
}

/** Two overlapping frames: compare. */
export function CompareMark({ className }: IconProps) {
  return (
    <svg viewBox="0 0 20 20" width="18" height="18" aria-hidden="true" className={className}>
      <rect x="2.5" y="4.5" width="8" height="11" rx="1.5" fill="none" stroke="currentColor" strokeWidth="1.5" />
      <rect x="9.5" y="4.5" width="8" height="11" rx="1.5" fill="currentColor" opacity=".25" stroke="currentColor" strokeWidth="1.5" />
    </svg>
  );
}
