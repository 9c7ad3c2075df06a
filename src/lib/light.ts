/**
 * Light notes: the lighting plan of a shoot and the exposure arithmetic that follows from it.
 *
 * Pure and shared: the editor island computes live with it and the server validates the saved
 * body with `lightNotesSchema`.
 *
 * Plan coordinates are metres from the plan's top-left corner: x runs across the room's width,
 * y runs down its depth.
 *
 * The simplification (shown on screen too): every source is a point source with the same
 * modifier efficiency; a bounce board, reflector or window counts as a source at its own spot
 * with no power of its own, so only distance sets its level; power enters only between flashes.
 */
import { z } from 'zod';
import { ev100 } from './exposure';

export const SOURCE_KINDS = ['flash', 'bounce_board', 'reflector', 'window'] as const;
export type SourceKind = (typeof SOURCE_KINDS)[number];

/** Flash power as the denominator of the fraction of full power: 1 = full, 128 = 1/128. */
export const POWER_DENOMINATORS = [1, 2, 4, 8, 16, 32, 64, 128] as const;
export type PowerDenominator = (typeof POWER_DENOMINATORS)[number];

export const MAX_ROOM_M = 50;
export const MAX_SOURCES = 24;
export const MAX_TEXT = 200;
/** Free-form notes get more room than a label; a setup description rarely fits in 200 characters. */
export const MAX_NOTES = 2000;

const metres = z.number().finite().min(0).max(MAX_ROOM_M);
const shortText = z.string().trim().max(MAX_TEXT);

export const lightSourceSchema = z.object({
  id: z.string().trim().min(1).max(MAX_TEXT),
  kind: z.enum(SOURCE_KINDS),
  label: shortText,
  power: z
    .number()
    .int()
    .refine((v) => (POWER_DENOMINATORS as readonly number[]).includes(v), {
      message: 'Power must be full, 1/2, 1/4 … 1/128',
    })
    .optional(),
  x: metres,
  y: metres,
  aimsAt: shortText,
  modifier: shortText.optional(),
});

export const cameraSettingsSchema = z.object({
  shutterS: z.number().finite().positive().max(3600).optional(),
  fNumber: z.number().finite().min(0.5).max(256).optional(),
  iso: z.number().finite().positive().max(10_000_000).optional(),
  focalLengthMm: z.number().finite().positive().max(5000).optional(),
});

export const lightNotesSchema = z
  .object({
    room: z.object({
      widthM: z.number().finite().positive().max(MAX_ROOM_M),
      depthM: z.number().finite().positive().max(MAX_ROOM_M),
    }),
    subject: z.object({ x: metres, y: metres }),
    sources: z.array(lightSourceSchema).max(MAX_SOURCES),
    keyId: z.string().max(MAX_TEXT).optional(),
    /** Which source counts as fill for the key-to-fill ratio; without it the brightest other source does. */
    fillId: z.string().max(MAX_TEXT).optional(),
    camera: cameraSettingsSchema.optional(),
    notes: z.string().max(MAX_NOTES).optional(),
  })
  .superRefine((notes, ctx) => {
    const { widthM, depthM } = notes.room;
    const outside = (x: number, y: number) => x > widthM || y > depthM;
    if (outside(notes.subject.x, notes.subject.y)) {
      ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['subject'], message: 'The subject must stand inside the room' });
    }
    const seen = new Set<string>();
    notes.sources.forEach((s, i) => {
      if (seen.has(s.id)) {
        ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['sources', i, 'id'], message: 'Each source needs its own id' });
      }
      seen.add(s.id);
      if (outside(s.x, s.y)) {
        ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['sources', i], message: `${s.label || 'A source'} must be inside the room` });
      }
      if (s.kind !== 'flash' && s.power !== undefined) {
        ctx.addIssue({ code: z.ZodIssueCode.custom, path: ['sources', i, 'power'], message: 'Only a flash has a power setting' });
      }
    });
    for (const key of ['keyId', 'fillId'] as const) {
      const id = notes[key];
      if (id !== undefined && !seen.has(id)) {
        ctx.addIssue({ code: z.ZodIssueCode.custom, path: [key], message: 'Pick one of the sources' });
      }
    }
  });

export type LightNotes = z.infer<typeof lightNotesSchema>;
export type LightSource = z.infer<typeof lightSourceSchema>;
export type CameraSettings = z.infer<typeof cameraSettingsSchema>;

export const SOURCE_KIND_NAMES: Record<SourceKind, string> = {
  flash: 'Flash',
  bounce_board: 'Bounce board',
  reflector: 'Reflector',
  window: 'Window',
};

// ---------------------------------------------------------------------------------------------
// Stops arithmetic

/** Stops gained by changing flash power from 1/from to 1/to (1/2 → 1/4 is −1). */
export function powerStops(fromDenominator: number, toDenominator: number): number {
  assertPositive(fromDenominator, 'fromDenominator');
  assertPositive(toDenominator, 'toDenominator');
  return Math.log2(fromDenominator / toDenominator);
}

/** Stops gained at the subject when a point source moves from d1 to d2 (inverse-square law). */
export function distanceStops(d1: number, d2: number): number {
  assertPositive(d1, 'd1');
  assertPositive(d2, 'd2');
  // Written as 2·log2(d1/d2) = −2·log2(d2/d1) so equal distances give 0, not −0.
  return 2 * Math.log2(d1 / d2);
}

/** The power denominator that moves a flash by deltaStops (may fall outside full…1/128). */
export function powerForStops(currentDenominator: number, deltaStops: number): number {
  assertPositive(currentDenominator, 'currentDenominator');
  return currentDenominator / 2 ** deltaStops;
}

/** The closest setting a flash actually offers, plus whether the wanted power is reachable. */
export function nearestPowerSetting(denominator: number): { power: PowerDenominator; isReachable: boolean } {
  const stopsFromFull = Math.log2(denominator);
  const index = Math.min(POWER_DENOMINATORS.length - 1, Math.max(0, Math.round(stopsFromFull)));
  const isReachable = stopsFromFull > -0.05 && stopsFromFull < POWER_DENOMINATORS.length - 1 + 0.05;
  return { power: POWER_DENOMINATORS[index], isReachable };
}

/** The distance that moves a point source by deltaStops at the subject. */
export function distanceForStops(currentDistance: number, deltaStops: number): number {
  assertPositive(currentDistance, 'currentDistance');
  return currentDistance * 2 ** (-deltaStops / 2);
}

/** Key-to-fill as stops and as a light ratio (2^stops). Positive stops: the key is brighter. */
export function keyToFillRatio(stopsDifference: number): { stops: number; ratio: number } {
  return { stops: stopsDifference, ratio: 2 ** stopsDifference };
}

/** "2.95:1", or "1:2.95" when the fill outshines the key. */
export function formatRatio(ratio: number): string {
  return ratio >= 1 ? `${ratio.toFixed(2)}:1` : `1:${(1 / ratio).toFixed(2)}`;
}

/** Subject distance for a flash of guide number gn (metres, ISO 100) at aperture fNumber. */
export function guideNumberDistance(gn: number, fNumber: number): number {
  assertPositive(gn, 'gn');
  assertPositive(fNumber, 'fNumber');
  return gn / fNumber;
}

/** Guide number at 1/denominator power, from the full-power guide number (GN scales with √power). */
export function guideNumberAtPower(fullPowerGn: number, denominator: number): number {
  assertPositive(fullPowerGn, 'fullPowerGn');
  assertPositive(denominator, 'denominator');
  return fullPowerGn / Math.sqrt(denominator);
}

// ---------------------------------------------------------------------------------------------
// From the plan

/** Straight-line plan distance from a source to the subject, in metres. */
export function distanceToSubject(notes: Pick<LightNotes, 'subject'>, source: Pick<LightSource, 'x' | 'y'>): number {
  return Math.hypot(source.x - notes.subject.x, source.y - notes.subject.y);
}

export type SourceReading = {
  id: string;
  distanceM: number;
  /** Exposure at the subject relative to the key, in stops; null with no key or a source on the subject. */
  stopsRelativeToKey: number | null;
};

/**
 * Each source's level at the subject relative to the key: distance stops for everyone, plus
 * power stops when both the source and the key are flashes. A source standing on the subject
 * (distance 0) has no finite level and reads null.
 */
export function sourceStopsRelativeToKey(notes: LightNotes): SourceReading[] {
  const key = notes.sources.find((s) => s.id === notes.keyId);
  const keyDistance = key ? distanceToSubject(notes, key) : 0;
  return notes.sources.map((source) => {
    const distanceM = distanceToSubject(notes, source);
    if (!key || keyDistance <= 0 || distanceM <= 0) return { id: source.id, distanceM, stopsRelativeToKey: null };
    let stops = distanceStops(keyDistance, distanceM);
    if (source.kind === 'flash' && key.kind === 'flash') {
      stops += powerStops(key.power ?? 1, source.power ?? 1);
    }
    return { id: source.id, distanceM, stopsRelativeToKey: stops };
  });
}

export type KeyToFill = { keyId: string; fillId: string; stops: number; ratio: number; isFillChosen: boolean };

/**
 * Key-to-fill for the plan: the chosen fill, or else the brightest source other than the key.
 * Null when there is no key, no other source, or a level cannot be computed.
 */
export function keyToFillFromNotes(notes: LightNotes): KeyToFill | null {
  if (!notes.keyId) return null;
  const readings = sourceStopsRelativeToKey(notes).filter((r) => r.stopsRelativeToKey !== null && r.id !== notes.keyId);
  const chosen = notes.fillId ? readings.find((r) => r.id === notes.fillId) : undefined;
  const fill =
    chosen ??
    readings.reduce<SourceReading | undefined>(
      (best, r) => (best === undefined || (r.stopsRelativeToKey ?? -Infinity) > (best.stopsRelativeToKey ?? -Infinity) ? r : best),
      undefined,
    );
  if (!fill || fill.stopsRelativeToKey === null) return null;
  // The reading is fill relative to key; key-to-fill is the opposite sign.
  const { stops, ratio } = keyToFillRatio(-fill.stopsRelativeToKey);
  return { keyId: notes.keyId, fillId: fill.id, stops, ratio, isFillChosen: chosen !== undefined };
}

// ---------------------------------------------------------------------------------------------
// Camera settings

/** The settings' EV at ISO 100, log2(N²/t), when both aperture and shutter are known, else null. */
export function cameraEv100(camera: CameraSettings | null | undefined): number | null {
  if (!camera?.fNumber || !camera.shutterS) return null;
  return ev100(camera.fNumber, camera.shutterS);
}

export function formatIso(iso: number): string {
  return `ISO ${Math.round(iso)}`;
}

export function formatFocalLength(mm: number): string {
  return `${trimNumber(mm, 0)} mm`;
}

/** "1/4", or "Full" for 1. */
export function formatPower(denominator: number): string {
  return denominator === 1 ? 'Full' : `1/${denominator}`;
}

/** "+1.56 stops", "−0.50 stops", "0.00 stops" with a true minus sign. */
export function formatStops(stops: number, digits = 2): string {
  const rounded = Number(stops.toFixed(digits));
  const sign = rounded > 0 ? '+' : rounded < 0 ? '−' : '';
  const unit = Math.abs(rounded) === 1 ? 'stop' : 'stops';
  return `${sign}${Math.abs(rounded).toFixed(digits)} ${unit}`;
}

function trimNumber(value: number, digits: number): string {
  return String(Number(value.toFixed(digits)));
}

function assertPositive(value: number, name: string): void {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`${name} must be a positive number, got ${value}`);
}
