/**
 * Ratio crops: the named aspect ratios Fillcard cuts from a frame, and the crop geometry.
 * Pure so the UI can draw the same crop box the server cuts.
 */

export type RatioKey = 'crop_4x5' | 'crop_1x1' | 'crop_9x16' | 'print_8x10';
export type SocialRatioKey = Exclude<RatioKey, 'print_8x10'>;

export interface Ratio {
  key: RatioKey;
  label: string;
  /** Width term of the ratio (portrait ratios have w < h). */
  w: number;
  h: number;
}

export const RATIOS: Ratio[] = [
  { key: 'crop_4x5', label: '4:5 portrait post', w: 4, h: 5 },
  { key: 'crop_1x1', label: '1:1 square', w: 1, h: 1 },
  { key: 'crop_9x16', label: '9:16 story', w: 9, h: 16 },
  { key: 'print_8x10', label: '8×10 print', w: 8, h: 10 },
];

/**
 * Pixel sizes social posts are usually made at (common practice, no published source). A crop
 * smaller than this is kept at its own size rather than blown up.
 */
export const SOCIAL_SIZES: Record<SocialRatioKey, { width: number; height: number }> = {
  crop_4x5: { width: 1080, height: 1350 },
  crop_1x1: { width: 1080, height: 1080 },
  crop_9x16: { width: 1080, height: 1920 },
};

/** Pixels per inch the usual print guideline asks for (common practice, no published source). */
export const PRINT_PPI = 300;

export interface CropRect {
  left: number;
  top: number;
  width: number;
  height: number;
}

export interface FocusPoint {
  /** 0 = left edge, 1 = right edge. */
  x: number;
  /** 0 = top edge, 1 = bottom edge. */
  y: number;
}

function clamp(value: number, min: number, max: number): number {
  return Math.min(max, Math.max(min, value));
}

/** A focus point inside 0..1 on both axes; anything unusable becomes the centre. */
export function normaliseFocus(focus: Partial<FocusPoint> | null | undefined): FocusPoint {
  const pick = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? clamp(v, 0, 1) : 0.5);
  return { x: pick(focus?.x), y: pick(focus?.y) };
}

function assertPositiveInt(name: string, value: number): void {
  if (!Number.isInteger(value) || value <= 0) {
    throw new RangeError(`${name} must be a positive whole number, got ${value}`);
  }
}

/**
 * The largest crop of exactly ratioW:ratioH that fits in an imgW×imgH image, centred on the focus
 * point as far as the edges allow. The side that fills the image is kept whole and the other is
 * rounded, so the ratio is exact to one pixel.
 */
export function cropRect(
  imgW: number,
  imgH: number,
  ratioW: number,
  ratioH: number,
  focus: FocusPoint,
): CropRect {
  assertPositiveInt('image width', imgW);
  assertPositiveInt('image height', imgH);
  if (!(ratioW > 0) || !(ratioH > 0) || !Number.isFinite(ratioW) || !Number.isFinite(ratioH)) {
    throw new RangeError(`ratio must be two positive numbers, got ${ratioW}:${ratioH}`);
  }
  let width: number;
  let height: number;
  // Compare by cross-multiplying to avoid float ties deciding which side fills.
  if (imgW * ratioH >= imgH * ratioW) {
    height = imgH;
    width = clamp(Math.round((imgH * ratioW) / ratioH), 1, imgW);
  } else {
    width = imgW;
    height = clamp(Math.round((imgW * ratioH) / ratioW), 1, imgH);
  }
  const f = normaliseFocus(focus);
  const left = clamp(Math.round(f.x * imgW - width / 2), 0, imgW - width);
  const top = clamp(Math.round(f.y * imgH - height / 2), 0, imgH - height);
  return { left, top, width, height };
}

/** The largest print (long side in inches) a crop supports at PRINT_PPI. */
export function maxPrintLongEdgeInches(crop: { width: number; height: number }): number {
  return Math.max(crop.width, crop.height) / PRINT_PPI;
}
