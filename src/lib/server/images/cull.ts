import sharp from 'sharp';

/** Measurements that flag frames worth a second look. */
export interface CullMeasures {
  /** Mean Rec. 709 luma, 0 (black) to 1 (white). */
  meanLuminance: number;
  /** Share of pixels whose luma is at or above CLIP_LEVEL, 0..1. */
  clippedShare: number;
  /** Variance of the Laplacian of a 512-pixel greyscale copy; higher is crisper. Compare within a shoot. */
  sharpness: number;
  /** 64-bit DCT perceptual hash as 16 hex digits; near-duplicates differ in few bits. */
  phash: string;
}

export interface RawImage {
  data: Buffer;
  width: number;
  height: number;
  channels: 3;
}

/** Rec. 709 luma weights (ITU-R BT.709), applied to the gamma-encoded values as luma is defined. */
const KR = 0.2126;
const KG = 0.7152;
const KB = 0.0722;

/** 250 of 255: the level above which highlight detail is gone for practical purposes. */
export const CLIP_LEVEL = 250;

export function lumaStats(img: RawImage): { meanLuminance: number; clippedShare: number } {
  const { data } = img;
  const pixels = img.width * img.height;
  let sum = 0;
  let clipped = 0;
  // Plain float arithmetic: V8 runs this faster than table look-ups or fixed point.
  for (let i = 0; i < data.length; i += 3) {
    const y = KR * data[i]! + KG * data[i + 1]! + KB * data[i + 2]!;
    sum += y;
    if (y >= CLIP_LEVEL - 1e-9) clipped++;
  }
  return { meanLuminance: sum / pixels / 255, clippedShare: clipped / pixels };
}

function toLuma(img: { data: Buffer; width: number; height: number }): Float32Array {
  const out = new Float32Array(img.width * img.height);
  for (let p = 0, i = 0; p < out.length; p++, i += 3) {
    out[p] = KR * img.data[i]! + KG * img.data[i + 1]! + KB * img.data[i + 2]!;
  }
  return out;
}

/** Variance of the 4-neighbour Laplacian over the interior pixels. */
export function laplacianVariance(grey: Float32Array, width: number, height: number): number {
  if (width < 3 || height < 3) return 0;
  let sum = 0;
  let sumSq = 0;
  let n = 0;
  for (let y = 1; y < height - 1; y++) {
    const row = y * width;
    for (let x = 1; x < width - 1; x++) {
      const i = row + x;
      const l = 4 * grey[i]! - grey[i - 1]! - grey[i + 1]! - grey[i - width]! - grey[i + width]!;
      sum += l;
      sumSq += l * l;
      n++;
    }
  }
  const mean = sum / n;
  return sumSq / n - mean * mean;
}

const HASH_SIZE = 32;
const LOW = 9;
// DCT-II basis for the 9 lowest frequencies of a 32-sample signal.
const DCT_BASIS: Float64Array[] = Array.from({ length: LOW }, (_, u) => {
  const row = new Float64Array(HASH_SIZE);
  for (let x = 0; x < HASH_SIZE; x++) row[x] = Math.cos(((2 * x + 1) * u * Math.PI) / (2 * HASH_SIZE));
  return row;
});

/**
 * pHash: 2-D DCT of a 32×32 greyscale copy; the 8×8 block of lowest frequencies, leaving out the
 * zero-frequency row and column (as the original pHash library does, from memory), compared with
 * its median. The left-out terms carry overall brightness and plain left-right or top-bottom
 * gradients, which every studio backdrop has and which would make unrelated frames look alike.
 * Robust to resizing, recompression and small tonal changes.
 */
export function phashFromGrey32(grey: Float32Array): string {
  if (grey.length !== HASH_SIZE * HASH_SIZE) throw new RangeError('pHash needs a 32×32 greyscale image');
  const rows = new Float64Array(HASH_SIZE * LOW); // rows[y][v]
  for (let y = 0; y < HASH_SIZE; y++) {
    for (let v = 0; v < LOW; v++) {
      const basis = DCT_BASIS[v]!;
      let s = 0;
      for (let x = 0; x < HASH_SIZE; x++) s += grey[y * HASH_SIZE + x]! * basis[x]!;
      rows[y * LOW + v] = s;
    }
  }
  const coeffs = new Float64Array(64);
  for (let u = 1; u < LOW; u++) {
    const basis = DCT_BASIS[u]!;
    for (let v = 1; v < LOW; v++) {
      let s = 0;
      for (let y = 0; y < HASH_SIZE; y++) s += basis[y]! * rows[y * LOW + v]!;
      coeffs[(u - 1) * 8 + v - 1] = s;
    }
  }
  const sorted = Array.from(coeffs).sort((a, b) => a - b);
  const median = (sorted[31]! + sorted[32]!) / 2;
  let hash = 0n;
  for (let i = 0; i < 64; i++) hash = (hash << 1n) | (coeffs[i]! > median ? 1n : 0n);
  return hash.toString(16).padStart(16, '0');
}

/** Bits that differ between two 16-hex-digit hashes. */
export function hammingDistance(a: string, b: string): number {
  if (!/^[0-9a-f]{16}$/i.test(a) || !/^[0-9a-f]{16}$/i.test(b)) throw new RangeError('hashes must be 16 hex digits');
  let x = BigInt(`0x${a}`) ^ BigInt(`0x${b}`);
  let bits = 0;
  while (x) {
    bits += Number(x & 1n);
    x >>= 1n;
  }
  return bits;
}

/** Near-duplicate when this many bits or fewer differ. */
export const NEAR_DUPLICATE_BITS = 10;

export const SHARPNESS_EDGE = 512;

/** Resizes a raw RGB image to exactly width×height, staying raw. */
export async function resizeRaw(img: RawImage, width: number, height: number): Promise<RawImage> {
  if (width === img.width && height === img.height) return img;
  const { data, info } = await sharp(img.data, { raw: { width: img.width, height: img.height, channels: img.channels } })
    .resize(width, height, { fit: 'fill' })
    .raw()
    .toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height, channels: 3 };
}

/** The size that fits inside `edge` on the long side, never larger than the image. */
export function fitInside(width: number, height: number, edge: number): { width: number; height: number } {
  const scale = Math.min(1, edge / Math.max(width, height));
  return { width: Math.max(1, Math.round(width * scale)), height: Math.max(1, Math.round(height * scale)) };
}

/** A copy of at most SHARPNESS_EDGE on the long side, the size sharpness is judged at. */
export function smallCopy(img: RawImage): Promise<RawImage> {
  const size = fitInside(img.width, img.height, SHARPNESS_EDGE);
  return resizeRaw(img, size.width, size.height);
}

/**
 * All cull measures. `tones` gives luminance and clipping (any size that keeps small highlights:
 * the proof-sized copy is plenty); `small` is the SHARPNESS_EDGE copy for sharpness and the hash.
 */
export async function measureCull(tones: RawImage, small?: RawImage): Promise<CullMeasures> {
  const judged = small ?? (await smallCopy(tones));
  const tiny = await resizeRaw(judged, HASH_SIZE, HASH_SIZE);
  const { meanLuminance, clippedShare } = lumaStats(tones);
  return {
    meanLuminance,
    clippedShare,
    sharpness: laplacianVariance(toLuma(judged), judged.width, judged.height),
    phash: phashFromGrey32(toLuma(tiny)),
  };
}
