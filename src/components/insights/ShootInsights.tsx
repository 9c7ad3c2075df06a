import { useId, useMemo, type ReactNode } from 'react';
import { Bar, BarChart, CartesianGrid, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import {
  SOFT_REASON,
  computeCullHints,
  describeClipped,
  describeExposureOutlier,
  describeNearDuplicates,
  framesPerMinute,
  prefillCamera,
  valueCounts,
} from '../../lib/cull-hints';
import { formatAperture, formatShutter } from '../../lib/exposure';
import { formatFocalLength, formatIso } from '../../lib/light';

export type InsightFrame = {
  id: string;
  name: string;
  thumbUrl: string | null;
  exposureTimeS: number | null;
  fNumber: number | null;
  iso: number | null;
  focalLengthMm: number | null;
  takenAt: string | null;
  ev100: number | null;
  meanLuminance: number | null;
  clippedShare: number | null;
  sharpness: number | null;
  phash: string | null;
};

type Props = {
  shootId: string;
  frames: InsightFrame[];
  /** Page that lists the shoot's frames; each hint links to `${frameHrefBase}#frame-${id}`. */
  frameHrefBase: string;
};

/** Recharts takes colours as values, not classes: these are the tailwind tokens clay, paper-edge, ink-soft. */
const CHART_COLOURS = { bar: '#a4492b', grid: '#ddd3c3', text: '#44525a' };

type Bucket = { label: string; count: number };

export default function ShootInsights({ shootId, frames, frameHrefBase }: Props) {
  const ids = useId();
  const byId = useMemo(() => new Map(frames.map((f) => [f.id, f])), [frames]);
  const hints = useMemo(() => computeCullHints(frames), [frames]);

  const charts = useMemo(() => {
    const distribution = (values: (number | null)[], format: (v: number) => string): Bucket[] =>
      valueCounts(values).map(({ value, count }) => ({ label: format(value), count }));
    return {
      shutter: distribution(frames.map((f) => f.exposureTimeS), formatShutter),
      aperture: distribution(frames.map((f) => f.fNumber), formatAperture),
      iso: distribution(frames.map((f) => f.iso), formatIso),
      focal: distribution(frames.map((f) => f.focalLengthMm), formatFocalLength),
      perMinute: framesPerMinute(frames.map((f) => f.takenAt)).map(({ label, count }) => ({ label, count })),
    };
  }, [frames]);

  const usual = useMemo(() => prefillCamera(frames), [frames]);
  // Charts count only frames whose EXIF gave settings; the header says how many that is.
  const withSettings = useMemo(() => frames.filter((f) => f.exposureTimeS != null || f.fNumber != null || f.iso != null || f.focalLengthMm != null).length, [frames]);

  if (frames.length === 0) {
    return (
      <section className="card p-6 text-center font-sans text-ink" data-shoot={shootId}>
        <h2 className="font-display text-title">Shoot insights</h2>
        <p className="mt-2 text-body text-ink-soft">
          No frames are ready yet. Settings charts and cull hints appear here once the shoot&rsquo;s frames have been processed.
        </p>
      </section>
    );
  }

  const href = (id: string) => `${frameHrefBase}#frame-${encodeURIComponent(id)}`;
  const hintCount = hints.exposureOutliers.length + hints.clipped.length + hints.soft.length + hints.nearDuplicateGroups.length;
  const usualText = usual
    ? [
        usual.shutterS !== undefined ? formatShutter(usual.shutterS) : null,
        usual.fNumber !== undefined ? formatAperture(usual.fNumber) : null,
        usual.iso !== undefined ? formatIso(usual.iso) : null,
        usual.focalLengthMm !== undefined ? formatFocalLength(usual.focalLengthMm) : null,
      ]
        .filter(Boolean)
        .join(' · ')
    : null;

  return (
    <div className="flex flex-col gap-6 font-sans text-body text-ink" data-shoot={shootId}>
      <header>
        <h2 className="font-display text-title">Shoot insights</h2>
        <p className="mt-1 text-ink-soft">
          {frames.length} frame{frames.length === 1 ? '' : 's'}
          {withSettings < frames.length ? `, ${withSettings} with camera settings` : ''}
          {usualText ? ` · most used: ${usualText}` : ''}
        </p>
      </header>

      <section aria-labelledby={`${ids}-settings`}>
        <h3 id={`${ids}-settings`} className="font-display text-lead">
          Camera settings across the shoot
        </h3>
        <div className="mt-3 grid grid-cols-1 gap-4 md:grid-cols-2">
          <CountChart title="Shutter" data={charts.shutter} idPrefix={`${ids}-shutter`} />
          <CountChart title="Aperture" data={charts.aperture} idPrefix={`${ids}-aperture`} />
          <CountChart title="ISO" data={charts.iso} idPrefix={`${ids}-iso`} />
          <CountChart title="Focal length" data={charts.focal} idPrefix={`${ids}-focal`} />
        </div>
        <div className="mt-4">
          <CountChart
            title="Frames per minute"
            data={charts.perMinute}
            idPrefix={`${ids}-minutes`}
            note="By the camera's clock."
            valueHeading="Minute"
          />
        </div>
      </section>

      <section aria-labelledby={`${ids}-hints`}>
        <h3 id={`${ids}-hints`} className="font-display text-lead">
          Cull hints
        </h3>
        <p className="mt-1 text-caption text-ink-soft">
          Frames worth a second look. Thresholds: one stop from the shoot&rsquo;s middle frame, 2% of pixels clipped, under about a
          third of the usual sharpness, near-identical content. They are Fillcard&rsquo;s own rules of thumb.
        </p>
        {hintCount === 0 ? (
          <p className="notice-ok mt-3">Nothing to flag: every measured frame sits close to the rest.</p>
        ) : (
          <div className="mt-3 grid grid-cols-1 items-start gap-4 md:grid-cols-2">
            <HintList title="Exposure differs" empty="No exposure outliers.">
              {hints.exposureOutliers.map((o) => {
                const f = byId.get(o.id);
                return f ? <FrameLink key={o.id} frame={f} href={href(o.id)} reason={describeExposureOutlier(o)} /> : null;
              })}
            </HintList>
            <HintList title="Highlights clipped" empty="No clipped highlights.">
              {hints.clipped.map((id) => {
                const f = byId.get(id);
                return f && f.clippedShare !== null ? <FrameLink key={id} frame={f} href={href(id)} reason={describeClipped(f.clippedShare)} /> : null;
              })}
            </HintList>
            <HintList title="Soft focus" empty="No soft frames.">
              {hints.soft.map((id) => {
                const f = byId.get(id);
                return f ? <FrameLink key={id} frame={f} href={href(id)} reason={SOFT_REASON} /> : null;
              })}
            </HintList>
            <HintList title="Near-twins" empty="No near-duplicates.">
              {hints.nearDuplicateGroups.map((group) => (
                <li key={group.join('|')} className="rounded-card border border-paper-edge bg-paper p-2">
                  <p className="text-caption text-ink-soft">{describeNearDuplicates(group.length)}</p>
                  <ul className="mt-1 flex flex-wrap gap-2">
                    {group.map((id) => {
                      const f = byId.get(id);
                      return f ? (
                        <li key={id}>
                          <a href={href(id)} className={`${linkClass} flex-col items-start p-1`}>
                            <Thumb frame={f} />
                            <span className="max-w-[5.5rem] truncate text-caption">{f.name}</span>
                          </a>
                        </li>
                      ) : null;
                    })}
                  </ul>
                </li>
              ))}
            </HintList>
          </div>
        )}
      </section>
    </div>
  );
}

const linkClass =
  'flex min-h-11 items-center gap-3 rounded-card text-ink hover:bg-paper-deep focus:outline-none focus-visible:ring-2 focus-visible:ring-clay';

function HintList({ title, empty, children }: { title: string; empty: string; children: ReactNode[] }) {
  const items = children.filter(Boolean);
  return (
    <section className="card p-3">
      <h4 className="font-semibold">
        {title} <span className="font-normal text-ink-soft">({items.length})</span>
      </h4>
      {items.length === 0 ? <p className="mt-1 text-caption text-ink-soft">{empty}</p> : <ul className="mt-2 flex flex-col gap-1">{items}</ul>}
    </section>
  );
}

function FrameLink({ frame, href, reason }: { frame: InsightFrame; href: string; reason: string }) {
  return (
    <li>
      <a href={href} className={`${linkClass} p-1`}>
        <Thumb frame={frame} />
        <span className="min-w-0">
          <span className="block truncate font-semibold">{frame.name}</span>
          <span className="block text-caption text-ink-soft">{reason}</span>
        </span>
      </a>
    </li>
  );
}

function Thumb({ frame }: { frame: InsightFrame }) {
  // The frame's name sits beside the picture, so the image itself is decorative.
  return frame.thumbUrl ? (
    <img src={frame.thumbUrl} alt="" width={80} height={80} loading="lazy" className="h-20 w-20 shrink-0 rounded bg-paper-deep object-cover" />
  ) : (
    <span className="flex h-20 w-20 shrink-0 items-center justify-center rounded bg-paper-deep text-caption text-ink-soft" aria-hidden="true">
      no preview
    </span>
  );
}

function CountChart({
  title,
  data,
  idPrefix,
  note,
  valueHeading = 'Setting',
}: {
  title: string;
  data: Bucket[];
  idPrefix: string;
  note?: string;
  valueHeading?: string;
}) {
  const captionId = `${idPrefix}-caption`;
  return (
    <figure aria-labelledby={captionId} className="card p-3">
      <figcaption id={captionId} className="font-semibold">
        {title}
        {note ? <span className="ml-2 text-caption font-normal text-ink-soft">{note}</span> : null}
      </figcaption>
      {data.length === 0 ? (
        <p className="mt-2 text-caption text-ink-soft">Not recorded in these frames.</p>
      ) : (
        <>
          <div className="mt-2 h-52" aria-hidden="true">
            <ResponsiveContainer width="100%" height="100%" initialDimension={{ width: 320, height: 208 }}>
              <BarChart data={data} margin={{ top: 4, right: 8, bottom: 4, left: -16 }} accessibilityLayer={false}>
                <CartesianGrid vertical={false} stroke={CHART_COLOURS.grid} />
                <XAxis dataKey="label" tick={{ fill: CHART_COLOURS.text, fontSize: 12 }} stroke={CHART_COLOURS.grid} interval="preserveStartEnd" minTickGap={8} />
                <YAxis allowDecimals={false} tick={{ fill: CHART_COLOURS.text, fontSize: 12 }} stroke={CHART_COLOURS.grid} />
                <Tooltip cursor={{ fill: CHART_COLOURS.grid, opacity: 0.4 }} formatter={(v) => [`${String(v)} frames`, 'Count']} />
                <Bar dataKey="count" name="Frames" fill={CHART_COLOURS.bar} radius={[3, 3, 0, 0]} isAnimationActive={false} />
              </BarChart>
            </ResponsiveContainer>
          </div>
          {/* The chart is drawn for the eye; the same counts as a table for screen readers. */}
          <table className="sr-only">
            <caption>{title}: frames by value</caption>
            <thead>
              <tr>
                <th scope="col">{valueHeading}</th>
                <th scope="col">Frames</th>
              </tr>
            </thead>
            <tbody>
              {data.map((d) => (
                <tr key={d.label}>
                  <th scope="row">{d.label}</th>
                  <td>{d.count}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      )}
    </figure>
  );
}
