/**
 * Cull hints: measurements that flag frames worth a second look, plus the shoot-wide tallies
 * they sit beside (most common settings, frames per minute). Pure: the worker's numbers in,
 * plain lists out.
 */

export type CullFrame = {
  id: string;
  /** EV of the camera settings at ISO 100, log2(N²/t). */
  ev100: number | null;
  /** Mean luminance of the frame on any linear-or-gamma scale; only ratios between frames are used. */
  meanLuminance: number | null;
  /** Share of pixels at the top of the range, 0–1. */
  clippedShare: number | null;
  /** Any sharpness measure where larger is sharper; only ratios to the shoot's median are used. */
  sharpness: number | null;
  /** 64-bit perceptual hash as 16 hex digits. */
  phash: string | null;
};

export type ExposureOutlier = { id: string; evDelta?: number; brightnessDeltaStops?: number };

export type CullHints = {
  exposureOutliers: ExposureOutlier[];
  clipped: string[];
  soft: string[];
  nearDuplicateGroups: string[][];
};

// The thresholds below are Fillcard's own choice (common practice, no published source).
/** A frame whose settings or brightness sit this many stops or more from the shoot's median. */
export const EXPOSURE_OUTLIER_STOPS = 1;
/** Share of clipped pixels at which highlights count as blown: 2%. */
export const CLIPPED_SHARE_LIMIT = 0.02;
/** Softer than this fraction of the shoot's median sharpness counts as soft. */
export const SOFT_SHARPNESS_FRACTION = 0.35;
/** Perceptual hashes this close (bits differing out of 64) count as near-duplicates. */
export const NEAR_DUPLICATE_MAX_HAMMING = 10;

/** Log and EV arithmetic leaves 0.9999999…; a delta that close to the limit counts as on it. */
const EPSILON = 1e-9;

const PHASH = /^[0-9a-f]{16}$/i;

export function median(values: readonly number[]): number | null {
  const sorted = values.filter((v) => Number.isFinite(v)).sort((a, b) => a - b);
  if (sorted.length === 0) return null;
  const mid = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2;
}

/** Bits that differ between two 16-hex-digit hashes, or null if either is not such a hash. */
export function hammingDistance(a: string, b: string): number | null {
  if (!PHASH.test(a) || !PHASH.test(b)) return null;
  // Two 32-bit halves: plain numbers stay exact and avoid BigInt.
  const high = (parseInt(a.slice(0, 8), 16) ^ parseInt(b.slice(0, 8), 16)) >>> 0;
  const low = (parseInt(a.slice(8), 16) ^ parseInt(b.slice(8), 16)) >>> 0;
  return popCount(high) + popCount(low);
}

function popCount(n: number): number {
  let count = 0;
  for (let v = n >>> 0; v !== 0; v &= v - 1) count++;
  return count;
}

export function computeCullHints(frames: readonly CullFrame[]): CullHints {
  const present = (pick: (f: CullFrame) => number | null) =>
    frames.map(pick).filter((v): v is number => v !== null && Number.isFinite(v));

  const medianEv = median(present((f) => f.ev100));
  // Luminance ratios need positive values; a zero mean cannot be placed in stops.
  const medianLum = median(present((f) => f.meanLuminance).filter((v) => v > 0));
  const medianSharpness = median(present((f) => f.sharpness));

  const exposureOutliers: ExposureOutlier[] = [];
  const clipped: string[] = [];
  const soft: string[] = [];

  for (const f of frames) {
    const outlier: ExposureOutlier = { id: f.id };
    if (f.ev100 !== null && Number.isFinite(f.ev100) && medianEv !== null) {
      const delta = f.ev100 - medianEv;
      if (Math.abs(delta) >= EXPOSURE_OUTLIER_STOPS - EPSILON) outlier.evDelta = delta;
    }
    if (f.meanLuminance !== null && f.meanLuminance > 0 && medianLum !== null) {
      const delta = Math.log2(f.meanLuminance / medianLum);
      if (Math.abs(delta) >= EXPOSURE_OUTLIER_STOPS - EPSILON) outlier.brightnessDeltaStops = delta;
    }
    if (outlier.evDelta !== undefined || outlier.brightnessDeltaStops !== undefined) exposureOutliers.push(outlier);

    if (f.clippedShare !== null && f.clippedShare >= CLIPPED_SHARE_LIMIT) clipped.push(f.id);

    if (f.sharpness !== null && medianSharpness !== null && medianSharpness > 0 && f.sharpness < SOFT_SHARPNESS_FRACTION * medianSharpness) {
      soft.push(f.id);
    }
  }

  return { exposureOutliers, clipped, soft, nearDuplicateGroups: nearDuplicateGroups(frames) };
}

/**
 * Frames whose hashes lie within NEAR_DUPLICATE_MAX_HAMMING of each other, grouped transitively
 * (a ~ b and b ~ c put a, b, c together). Groups keep the frames' order; singles are left out.
 * Every pair is compared: a few thousand frames stay well under a second.
 */
export function nearDuplicateGroups(frames: readonly Pick<CullFrame, 'id' | 'phash'>[]): string[][] {
  const hashed = frames.filter((f) => f.phash !== null && PHASH.test(f.phash));
  const parent = hashed.map((_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]!]!;
      i = parent[i]!;
    }
    return i;
  };
  for (let i = 0; i < hashed.length; i++) {
    for (let j = i + 1; j < hashed.length; j++) {
      const d = hammingDistance(hashed[i]!.phash!, hashed[j]!.phash!);
      if (d !== null && d <= NEAR_DUPLICATE_MAX_HAMMING) {
        const ri = find(i);
        const rj = find(j);
        // The lower index stays root so groups come out in frame order.
        if (ri !== rj) parent[Math.max(ri, rj)] = Math.min(ri, rj);
      }
    }
  }
  const groups = new Map<number, string[]>();
  hashed.forEach((f, i) => {
    const root = find(i);
    const group = groups.get(root);
    if (group) group.push(f.id);
    else groups.set(root, [f.id]);
  });
  return [...groups.values()].filter((g) => g.length > 1);
}

// ---------------------------------------------------------------------------------------------
// Plain words for each hint

export function describeExposureOutlier(outlier: ExposureOutlier): string {
  const parts: string[] = [];
  if (outlier.brightnessDeltaStops !== undefined) {
    const d = outlier.brightnessDeltaStops;
    parts.push(`${stopsWord(d)} ${d < 0 ? 'darker' : 'brighter'} than the shoot's middle frame`);
  }
  if (outlier.evDelta !== undefined) {
    // A higher EV of the settings lets in less light.
    const d = outlier.evDelta;
    parts.push(`settings let in ${stopsWord(d)} ${d > 0 ? 'less' : 'more'} light than the shoot's usual`);
  }
  const text = parts.join('; ');
  return text.charAt(0).toUpperCase() + text.slice(1);
}

export function describeClipped(clippedShare: number): string {
  const percent = Math.round(clippedShare * 1000) / 10;
  return `${percent}% of pixels clipped`;
}

export const SOFT_REASON = 'Softer than most frames';

export function describeNearDuplicates(groupSize: number): string {
  return groupSize === 2 ? 'Near-twins: two frames almost alike' : `Near-twins: ${groupSize} frames almost alike`;
}

function stopsWord(stops: number): string {
  const size = Math.abs(stops).toFixed(1);
  return `${size} ${size === '1.0' ? 'stop' : 'stops'}`;
}

// ---------------------------------------------------------------------------------------------
// Shoot-wide tallies

/** The value seen most often (nulls ignored); on a tie the one seen first. */
export function mostCommon<T>(values: readonly (T | null | undefined)[]): T | undefined {
  const counts = new Map<T, number>();
  for (const v of values) if (v !== null && v !== undefined) counts.set(v, (counts.get(v) ?? 0) + 1);
  let best: T | undefined;
  let bestCount = 0;
  // A Map iterates in first-seen order, so a strict > keeps the earliest of equal counts.
  for (const [v, count] of counts) {
    if (count > bestCount) {
      best = v;
      bestCount = count;
    }
  }
  return best;
}

/** How many times each number occurs, smallest value first. */
export function valueCounts(values: readonly (number | null | undefined)[]): { value: number; count: number }[] {
  const counts = new Map<number, number>();
  for (const v of values) if (v !== null && v !== undefined && Number.isFinite(v)) counts.set(v, (counts.get(v) ?? 0) + 1);
  return [...counts.entries()].map(([value, count]) => ({ value, count })).sort((a, b) => a.value - b.value);
}

export type CameraPrefill = { shutterS?: number; fNumber?: number; iso?: number; focalLengthMm?: number };

/** The shoot's most common shutter, aperture, ISO and focal length; null when none is known. */
export function prefillCamera(
  frames: readonly { exposureTimeS: number | null; fNumber: number | null; iso: number | null; focalLengthMm: number | null }[],
): CameraPrefill | null {
  const prefill: CameraPrefill = {};
  const shutterS = mostCommon(frames.map((f) => f.exposureTimeS));
  const fNumber = mostCommon(frames.map((f) => f.fNumber));
  const iso = mostCommon(frames.map((f) => f.iso));
  const focalLengthMm = mostCommon(frames.map((f) => f.focalLengthMm));
  if (shutterS !== undefined) prefill.shutterS = shutterS;
  if (fNumber !== undefined) prefill.fNumber = fNumber;
  if (iso !== undefined) prefill.iso = iso;
  if (focalLengthMm !== undefined) prefill.focalLengthMm = focalLengthMm;
  return Object.keys(prefill).length > 0 ? prefill : null;
}

export type MinuteCount = { minute: string; label: string; count: number };

/** Beyond this span, minutes without frames are left out rather than drawn as empty bars. */
export const MAX_FILLED_MINUTES = 240;

const WALL_CLOCK = /^(\d{4})[-:](\d{2})[-:](\d{2})[T ](\d{2}):(\d{2})/;

/**
 * Frames per minute of the wall-clock time written in each time stamp (its own offset, not the
 * viewer's), so server and browser agree and the labels read as the studio's clock did.
 * Accepts ISO 8601 ("2031-05-01T14:03:22+02:00") and EXIF ("2031:05:01 14:03:22") forms.
 */
export function framesPerMinute(takenAts: readonly (string | null)[]): MinuteCount[] {
  const counts = new Map<number, number>();
  for (const t of takenAts) {
    const m = t ? WALL_CLOCK.exec(t) : null;
    if (!m) continue;
    // Date.UTC only as a calendar calculator for the wall-clock minute; no zone is implied.
    const minute = Date.UTC(+m[1]!, +m[2]! - 1, +m[3]!, +m[4]!, +m[5]!) / 60_000;
    if (!Number.isFinite(minute)) continue;
    counts.set(minute, (counts.get(minute) ?? 0) + 1);
  }
  if (counts.size === 0) return [];
  const minutes = [...counts.keys()].sort((a, b) => a - b);
  const first = minutes[0]!;
  const last = minutes[minutes.length - 1]!;
  const all = last - first <= MAX_FILLED_MINUTES ? Array.from({ length: last - first + 1 }, (_, i) => first + i) : minutes;
  const spansDays = Math.floor(first / 1440) !== Math.floor(last / 1440);
  return all.map((minute) => {
    const iso = new Date(minute * 60_000).toISOString().slice(0, 16);
    return { minute: iso, label: spansDays ? iso.replace('T', ' ') : iso.slice(11), count: counts.get(minute) ?? 0 };
  });
}
