import { createHash } from 'node:crypto';
import sharp from 'sharp';
import { ev100 } from '../../exposure';
import { RATIOS, SOCIAL_SIZES, cropRect, normaliseFocus, type FocusPoint, type SocialRatioKey } from '../../ratios';
import { fitInside, measureCull, resizeRaw, smallCopy, type CullMeasures, type RawImage } from './cull';
import { decodeUpright, inspectImage } from './decode';
import { readFrameExif, type FrameExif } from './exif';
import { blendOverlay, watermarkOverlay, type WatermarkSpec } from './watermark';

export type VariantKind = 'thumb' | 'proof' | SocialRatioKey;

export interface VariantOut {
  kind: VariantKind;
  data: Buffer;
  width: number;
  height: number;
  /** sha256 hex of data, for content-addressed storage keys. */
  contentHash: string;
}

export const THUMB_EDGE = 480;
export const PROOF_EDGE = 2048;
const THUMB_QUALITY = 78;
const PROOF_QUALITY = 82;
const CROP_QUALITY = 88;
/** Above this the intermediate stops growing (very wide panoramas): crops are then kept smaller. */
const MAX_INTERMEDIATE_PIXELS = 16_000_000;

const SOCIAL_RATIOS = RATIOS.filter((r): r is (typeof RATIOS)[number] & { key: SocialRatioKey } => r.key in SOCIAL_SIZES);

/**
 * The smallest upright size from which every variant can be cut at its full size: the proof's
 * long edge, and each social crop's pixel size inside the crop's share of the frame. Never larger
 * than the original.
 */
export function intermediateSize(width: number, height: number, forCropsOnly = false): { width: number; height: number } {
  let scale = forCropsOnly ? 0 : PROOF_EDGE / Math.max(width, height);
  for (const r of SOCIAL_RATIOS) {
    const crop = cropRect(width, height, r.w, r.h, { x: 0.5, y: 0.5 });
    scale = Math.max(scale, SOCIAL_SIZES[r.key].width / crop.width, SOCIAL_SIZES[r.key].height / crop.height);
  }
  scale = Math.min(1, scale, Math.sqrt(MAX_INTERMEDIATE_PIXELS / (width * height)));
  // Round up so the decoder's own rounding cannot leave a crop a pixel short of its size.
  return { width: Math.min(width, Math.ceil(width * scale)), height: Math.min(height, Math.ceil(height * scale)) };
}

function fromRaw(img: RawImage): sharp.Sharp {
  return sharp(img.data, { raw: { width: img.width, height: img.height, channels: img.channels } });
}

async function encode(kind: VariantKind, pipeline: sharp.Sharp, quality: number): Promise<VariantOut> {
  const { data, info } = await pipeline.jpeg({ quality }).toBuffer({ resolveWithObject: true });
  return { kind, data, width: info.width, height: info.height, contentHash: createHash('sha256').update(data).digest('hex') };
}

/** The three social crops around the focus point, at their usual pixel size or smaller when the frame is. */
export async function cropsFromIntermediate(img: RawImage, focus: FocusPoint): Promise<VariantOut[]> {
  return Promise.all(
    SOCIAL_RATIOS.map((r) => {
      const rect = cropRect(img.width, img.height, r.w, r.h, focus);
      const target = SOCIAL_SIZES[r.key];
      let pipeline = fromRaw(img).extract(rect);
      // A crop a hair short of the target (rounding in the decoder) is still brought to it.
      if (rect.width >= target.width * 0.99 && rect.height >= target.height * 0.99) {
        // rect is the exact ratio to a pixel; 'cover' trims that pixel instead of stretching.
        pipeline = pipeline.resize(target.width, target.height, { fit: 'cover' });
      }
      return encode(r.key, pipeline, CROP_QUALITY);
    }),
  );
}

/** The proof-sized copy of the intermediate: long edge PROOF_EDGE, unwatermarked. */
export function proofBase(img: RawImage): Promise<RawImage> {
  const size = fitInside(img.width, img.height, PROOF_EDGE);
  return resizeRaw(img, size.width, size.height);
}

/** The base with the watermark drawn in; with `consumeBase` into the base's own pixels. */
export async function watermarkedBase(base: RawImage, watermark: WatermarkSpec, consumeBase = false): Promise<RawImage> {
  const overlay = await watermarkOverlay(watermark, base.width, base.height);
  let pixels = base.data;
  if (overlay) {
    if (!consumeBase) pixels = Buffer.from(base.data);
    blendOverlay(pixels, base.width, base.height, overlay);
  }
  return { ...base, data: pixels };
}

/**
 * Where a crop should centre when the owner has not said: libvips' attention strategy (skin
 * tones, saturation, edges) on a small copy.
 */
export async function findFocus(img: RawImage): Promise<FocusPoint> {
  const side = Math.min(256, img.width, img.height);
  const scale = side / Math.min(img.width, img.height);
  const scaledW = Math.round(img.width * scale);
  const scaledH = Math.round(img.height * scale);
  const { info } = await fromRaw(img)
    .resize(side, side, { fit: 'cover', position: sharp.strategy.attention })
    .raw()
    .toBuffer({ resolveWithObject: true });
  const ax = (info as sharp.OutputInfo & { attentionX?: number }).attentionX;
  const ay = (info as sharp.OutputInfo & { attentionY?: number }).attentionY;
  if (typeof ax !== 'number' || typeof ay !== 'number') return { x: 0.5, y: 0.5 };
  return normaliseFocus({ x: ax / scaledW, y: ay / scaledH });
}

export interface FrameVariantsInput {
  original: Buffer;
  watermark: WatermarkSpec;
  /** Set when the owner has placed the focus point; found automatically otherwise. */
  focus?: FocusPoint | null;
  /** The uploaded name, for the extension check and for messages. */
  fileName?: string;
}

export interface FrameVariants {
  /** Upright pixel size of the original. */
  width: number;
  height: number;
  orientation: number;
  exif: FrameExif;
  ev100: number | null;
  focus: FocusPoint;
  cull: CullMeasures;
  variants: VariantOut[];
}

/**
 * Everything a new frame needs, from one decode: thumbnail, watermarked proof, social crops,
 * EXIF, exposure and cull measures. Throws ImageRejected for anything that is not a usable photo.
 */
export async function buildFrameVariants(input: FrameVariantsInput): Promise<FrameVariants> {
  const facts = await inspectImage(input.original, input.fileName);
  const size = intermediateSize(facts.width, facts.height);
  const [exif, img] = await Promise.all([
    readFrameExif(input.original),
    decodeUpright(input.original, size.width, size.height, input.fileName),
  ]);
  // Everything but the crops comes from the proof-sized copy, which is cheaper to scan and resize.
  const base = await proofBase(img);
  const small = await smallCopy(base);
  const focus = input.focus ? normaliseFocus(input.focus) : await findFocus(small);
  const thumbSize = fitInside(base.width, base.height, THUMB_EDGE);
  const [cull, crops] = await Promise.all([measureCull(base, small), cropsFromIntermediate(img, focus)]);
  // Clients see the thumbnail too, so it is cut from the watermarked proof. Nothing reads the clean
  // base any more, so the watermark goes straight into it, unless a small frame made it the intermediate.
  const marked = await watermarkedBase(base, input.watermark, base !== img);
  const [thumb, proof] = await Promise.all([
    encode('thumb', fromRaw(marked).resize(thumbSize.width, thumbSize.height, { fit: 'fill' }), THUMB_QUALITY),
    encode('proof', fromRaw(marked), PROOF_QUALITY),
  ]);
  const exposure = exif.fNumber !== null && exif.exposureTimeS !== null ? ev100(exif.fNumber, exif.exposureTimeS) : null;
  return {
    width: facts.width,
    height: facts.height,
    orientation: facts.orientation,
    exif,
    ev100: exposure,
    focus,
    cull,
    variants: [thumb, proof, ...crops],
  };
}

/** Rebuilds only the social crops, for when the owner moves the focus point. */
export async function buildCropVariants(original: Buffer, focus: FocusPoint): Promise<VariantOut[]> {
  const facts = await inspectImage(original);
  const size = intermediateSize(facts.width, facts.height, true);
  const img = await decodeUpright(original, size.width, size.height);
  return cropsFromIntermediate(img, normaliseFocus(focus));
}
