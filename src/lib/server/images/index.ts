/**
 * Fillcard's image pipeline: bytes in, variants and measurements out. No database, no storage;
 * callers decide where results go.
 */
export { ImageRejected, IMAGE_LIMITS, type ImageRejectedCode } from './errors';
export { sniffImageType, checkNameMatchesType, checkUpload, describeNonImage, type ImageType } from './signature';
export { readFrameExif, cleanExifText, hasGpsPosition, type FrameExif } from './exif';
export { scrubJpegExif } from './jpeg-exif';
export { inspectImage, type ImageFacts } from './decode';
export { hammingDistance, NEAR_DUPLICATE_BITS, CLIP_LEVEL, type CullMeasures } from './cull';
export { WATERMARK_FONT_FILE, type WatermarkSpec } from './watermark';
export {
  buildFrameVariants,
  buildCropVariants,
  intermediateSize,
  THUMB_EDGE,
  PROOF_EDGE,
  type VariantOut,
  type VariantKind,
  type FrameVariants,
  type FrameVariantsInput,
} from './variants';
export { buildFinalVariants, type FinalVariants, type FinalCrop } from './finals';
