import sharp from 'sharp';
import { ImageRejected, IMAGE_LIMITS, formatMegapixels } from './errors';
import { checkUpload, type ImageType } from './signature';
import type { RawImage } from './cull';

export interface ImageFacts {
  type: ImageType;
  /** Upright size: after applying the EXIF orientation. */
  width: number;
  height: number;
  /** EXIF orientation 1..8, 1 when absent. */
  orientation: number;
}

/** sharp options every decode of an untrusted file uses. */
export const DECODE_OPTIONS = {
  limitInputPixels: IMAGE_LIMITS.maxPixels,
  // 'error' refuses truncated and corrupt data but lets through the harmless warnings some
  // cameras' JPEGs raise.
  failOn: 'error',
} as const satisfies sharp.SharpOptions;

function subject(fileName?: string): string {
  const base = fileName?.split(/[\\/]/).pop()?.replace(/[\u0000-\u001f\u007f-\u009f]/g, '').trim();
  return base ? `“${base.length > 80 ? `${base.slice(0, 77)}…` : base}”` : 'This file';
}

function tooManyPixels(width: number, height: number, fileName?: string): ImageRejected {
  return new ImageRejected(
    'too_many_pixels',
    `${subject(fileName)} is ${width} × ${height} pixels (${formatMegapixels(width * height)}); ` +
      `Fillcard takes up to ${formatMegapixels(IMAGE_LIMITS.maxPixels)} per frame. Please export it smaller.`,
  );
}

/** Turns a decoder failure into the rejection a photographer sees. */
export function decodeFailure(err: unknown, fileName?: string): ImageRejected {
  if (err instanceof ImageRejected) return err;
  const detail = err instanceof Error ? err.message : String(err);
  if (/pixel limit/i.test(detail)) {
    return new ImageRejected(
      'too_many_pixels',
      `${subject(fileName)} has more pixels than Fillcard takes (${formatMegapixels(IMAGE_LIMITS.maxPixels)} per frame). Please export it smaller.`,
      { cause: err },
    );
  }
  return new ImageRejected(
    'damaged',
    `${subject(fileName)} looks damaged or incomplete; the upload may have been cut off. Please export it again and upload the new file.`,
    { cause: err },
  );
}

/**
 * Signature, size and header checks, without decoding pixels: a file that declares too many
 * pixels is refused before any memory is spent on it.
 */
export async function inspectImage(buf: Buffer, fileName?: string): Promise<ImageFacts> {
  const type = checkUpload(buf, fileName);
  let meta: sharp.Metadata;
  try {
    // Header only, no pixels: the limit is checked below so the message can give the size.
    meta = await sharp(buf, { ...DECODE_OPTIONS, limitInputPixels: false }).metadata();
  } catch (err) {
    throw decodeFailure(err, fileName);
  }
  const rawW = meta.width ?? 0;
  const rawH = meta.height ?? 0;
  if (rawW <= 0 || rawH <= 0) throw decodeFailure(new Error('no dimensions in header'), fileName);
  if (rawW * rawH > IMAGE_LIMITS.maxPixels) throw tooManyPixels(rawW, rawH, fileName);
  const orientation = meta.orientation && meta.orientation >= 1 && meta.orientation <= 8 ? meta.orientation : 1;
  const swap = orientation >= 5;
  return { type, width: swap ? rawH : rawW, height: swap ? rawW : rawH, orientation };
}

/**
 * The one full decode: upright, sRGB, 8-bit, no alpha (flattened on white), scaled to fit
 * `width`×`height`. libvips' JPEG shrink-on-load makes a large reduction cheaper than a full decode.
 */
export async function decodeUpright(buf: Buffer, width: number, height: number, fileName?: string): Promise<RawImage> {
  try {
    const { data, info } = await sharp(buf, DECODE_OPTIONS)
      .rotate()
      .resize(width, height, { fit: 'inside', withoutEnlargement: true, kernel: 'cubic' })
      .flatten({ background: '#ffffff' })
      .toColourspace('srgb')
      .raw({ depth: 'uchar' })
      .toBuffer({ resolveWithObject: true });
    if (info.channels !== 3) throw new Error(`decoded to ${info.channels} channels`);
    return { data, width: info.width, height: info.height, channels: 3 };
  } catch (err) {
    throw decodeFailure(err, fileName);
  }
}
