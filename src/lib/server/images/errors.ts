/**
 * Why an uploaded file is not taken. Every rejection carries a message a photographer can act on
 * ("export it again as JPEG"), a stable code for the database and UI, and the HTTP status that fits.
 */
export type ImageRejectedCode =
  | 'empty'
  | 'too_large'
  | 'too_many_pixels'
  | 'not_an_image'
  | 'unsupported_type'
  | 'raw_not_supported'
  | 'missing_extension'
  | 'extension_mismatch'
  | 'damaged';

export class ImageRejected extends Error {
  readonly code: ImageRejectedCode;
  readonly userMessage: string;
  readonly status: 413 | 422;

  constructor(code: ImageRejectedCode, userMessage: string, options?: { cause?: unknown }) {
    super(userMessage, options);
    this.name = 'ImageRejected';
    this.code = code;
    this.userMessage = userMessage;
    this.status = code === 'too_large' || code === 'too_many_pixels' ? 413 : 422;
  }
}

/**
 * Upper bounds for one frame. 150 megapixels is above any single-shot camera a portrait studio
 * uses yet keeps one decode within a worker's memory; 200 MB covers a 16-bit TIFF of that size.
 */
export const IMAGE_LIMITS = {
  maxBytes: 200 * 1024 * 1024,
  maxPixels: 150_000_000,
} as const;

export function formatMegapixels(pixels: number): string {
  return `${Number((pixels / 1_000_000).toFixed(1))} megapixels`;
}

export function formatMegabytes(bytes: number): string {
  return `${(bytes / (1024 * 1024)).toFixed(0)} MB`;
}
