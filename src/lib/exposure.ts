/**
 * Exposure arithmetic in APEX terms (the additive system the Exif standard uses):
 *   Av = 2·log2 N, Tv = −log2 t, Sv = log2(ISO / 3.125), Ev = Av + Tv = Bv + Sv.
 * Pure so the UI can show the same numbers the server stores.
 */

function assertPositive(name: string, value: number): void {
  if (!Number.isFinite(value) || value <= 0) {
    throw new RangeError(`${name} must be a positive number, got ${value}`);
  }
}

/** Aperture value Av = 2·log2 N. */
export function apertureValue(fNumber: number): number {
  assertPositive('fNumber', fNumber);
  return 2 * Math.log2(fNumber);
}

/** Time value Tv = −log2 t (t in seconds). */
export function timeValue(exposureTimeS: number): number {
  assertPositive('exposureTimeS', exposureTimeS);
  return -Math.log2(exposureTimeS);
}

/** Speed value Sv = log2(ISO / 3.125); 5 at ISO 100. */
export function speedValue(iso: number): number {
  assertPositive('iso', iso);
  return Math.log2(iso / 3.125);
}

/** Exposure value of a camera setting, EV = log2(N²/t) = Av + Tv (the ISO 100 convention). */
export function ev100(fNumber: number, exposureTimeS: number): number {
  return apertureValue(fNumber) + timeValue(exposureTimeS);
}

/**
 * The setting's exposure restated at ISO 100, i.e. how much light the scene gave: a frame at
 * f/5.6, 1/250 s, ISO 400 needed two stops less light than the same setting at ISO 100, so
 * this returns about 10.94. In APEX: Bv + Sv(100) = Av + Tv − Sv(iso) + 5.
 * Compare frames shot at different ISOs with this, not with ev100.
 */
export function evAtIso(fNumber: number, exposureTimeS: number, iso: number): number {
  return ev100(fNumber, exposureTimeS) - speedValue(iso) + speedValue(100);
}

function trimNumber(value: number, decimals: number): string {
  return String(Number(value.toFixed(decimals)));
}

/**
 * Shutter time in the plain words a photographer reads: "1/250 s" below about half a second
 * when the time is a clean reciprocal, otherwise seconds ("0.5 s", "2 s", "1.3 s").
 */
export function formatShutter(t: number): string {
  assertPositive('exposure time', t);
  if (t >= 0.4) return `${trimNumber(t, t >= 10 ? 0 : 1)} s`;
  const reciprocal = 1 / t;
  const rounded = Math.round(reciprocal);
  // Cameras store 1/3 s as 0.3 or 1/3; only call it a fraction when it really is one.
  if (rounded >= 2 && Math.abs(reciprocal - rounded) / reciprocal < 0.05) return `1/${rounded} s`;
  return `${trimNumber(t, t >= 0.1 ? 1 : 3)} s`;
}

/** "f/5.6", "f/8", "f/11": one decimal below f/10 as lenses mark them, whole numbers above. */
export function formatAperture(n: number): string {
  assertPositive('f-number', n);
  return `f/${trimNumber(n, n >= 10 ? 0 : 1)}`;
}

/** "+0.7 EV", "−1 EV", "0 EV" for exposure compensation. */
export function formatExposureBias(ev: number): string {
  if (!Number.isFinite(ev)) throw new RangeError(`exposure bias must be a number, got ${ev}`);
  const rounded = Number(ev.toFixed(1));
  if (rounded === 0) return '0 EV';
  return `${rounded > 0 ? '+' : '−'}${trimNumber(Math.abs(rounded), 1)} EV`;
}
