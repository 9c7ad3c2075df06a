/**
 * Browser URLs for proofs, thumbnails and crops. They are presigned GETs whose signing time is rounded
 * down to the hour, so the URL of a variant stays the same for an hour and the browser's cache (and a
 * CDN's, with the objects' year-long Cache-Control) keeps working, while a leaked URL dies within two hours.
 */
import { presignGet } from './storage';

const HOUR = 3600_000;

export async function variantUrl(key: string): Promise<string> {
  const signingDate = new Date(Math.floor(Date.now() / HOUR) * HOUR);
  return presignGet(key, { expiresIn: 2 * 3600, signingDate });
}

/** Cache header for content-addressed variants: the same key always holds the same bytes. */
export const IMMUTABLE = 'public, max-age=31536000, immutable';
