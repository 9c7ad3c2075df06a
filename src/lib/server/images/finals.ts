import sharp from 'sharp';
import { RATIOS, cropRect, normaliseFocus, type FocusPoint, type RatioKey } from '../../ratios';
import { DECODE_OPTIONS, decodeFailure, inspectImage } from './decode';
import { hasGpsPosition } from './exif';
import { scrubJpegExif } from './jpeg-exif';

export interface FinalCrop {
  kind: RatioKey;
  data: Buffer;
  width: number;
  height: number;
}

export interface FinalVariants {
  /** Upright pixel size of the final, which `full` keeps. */
  width: number;
  height: number;
  /** JPEG, sRGB with the profile embedded, camera EXIF kept; GPS and the embedded preview removed. */
  full: Buffer;
  /** Full-resolution ratio crops, sRGB with the profile embedded, no EXIF. */
  crops: FinalCrop[];
}

// Finals are the delivered product: near-lossless re-encode with full colour resolution.
const FINAL_QUALITY = 95;
const CROP_QUALITY = 92;

function upright(buf: Buffer): sharp.Sharp {
  return sharp(buf, DECODE_OPTIONS).rotate().flatten({ background: '#ffffff' });
}

/**
 * The delivered file and its full-resolution ratio crops. Every output is JPEG in sRGB with the
 * profile embedded, so it looks the same in any browser or print lab. The full file keeps the
 * camera settings; where the picture was taken never leaves the studio.
 */
export async function buildFinalVariants(final: Buffer, focus: FocusPoint, fileName?: string): Promise<FinalVariants> {
  const facts = await inspectImage(final, fileName);
  const point = normaliseFocus(focus);
  let full: Buffer;
  try {
    const encoded = await upright(final)
      .withIccProfile('srgb')
      .keepExif()
      .jpeg({ quality: FINAL_QUALITY, chromaSubsampling: '4:4:4' })
      .toBuffer();
    full = scrubJpegExif(encoded, { dropGps: true, dropThumbnail: true, markSrgb: true });
  } catch (err) {
    throw decodeFailure(err, fileName);
  }
  if (await hasGpsPosition(full)) throw new Error('GPS position survived in a final; refusing to deliver it');

  // 8×10 and 4:5 are the same shape: cut once, list under both names.
  const byShape = new Map<string, Promise<{ data: Buffer; width: number; height: number }>>();
  const crops: FinalCrop[] = [];
  for (const r of RATIOS) {
    const g = gcd(r.w, r.h);
    const shape = `${r.w / g}:${r.h / g}`;
    let cut = byShape.get(shape);
    if (!cut) {
      const rect = cropRect(facts.width, facts.height, r.w, r.h, point);
      cut = upright(final)
        .extract(rect)
        .withIccProfile('srgb')
        .jpeg({ quality: CROP_QUALITY, chromaSubsampling: '4:4:4' })
        .toBuffer({ resolveWithObject: true })
        .then(({ data, info }) => ({ data, width: info.width, height: info.height }))
        .catch((err: unknown) => {
          throw decodeFailure(err, fileName);
        });
      byShape.set(shape, cut);
    }
    crops.push({ kind: r.key, ...(await cut) });
  }
  return { width: facts.width, height: facts.height, full, crops };
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}
