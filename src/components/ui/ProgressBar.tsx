/** A labelled progress bar; each segment fills its share of the whole (ready in moss, failed in ember…). */
export interface ProgressSegment {
  value: number;
  className: string;
}

interface Props {
  label: string;
  value: number;
  max: number;
  valueText?: string;
  segments: ProgressSegment[];
  className?: string;
}

export default function ProgressBar({ label, value, max, valueText, segments, className = 'mt-3 h-2.5' }: Props) {
  const share = (n: number) => (max > 0 ? Math.min(100, (n / max) * 100) : 0);
  return (
    <div
      className={`${className} flex overflow-hidden rounded-full bg-paper-deep`}
      role="progressbar"
      aria-label={label}
      aria-valuemin={0}
      aria-valuemax={max}
      aria-valuenow={value}
      aria-valuetext={valueText}
    >
      {segments.map((s, i) => (
        <div key={i} className={`h-full transition-[width] duration-500 ${s.className}`} style={{ width: `${share(s.value)}%` }} />
      ))}
    </div>
  );
}
