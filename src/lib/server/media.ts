/**
 * Browser URLs for proofs, thumbnails and crops. They are presigned GETs whose signing time is rounded
 * down to the hour, so the URL of a variant stays the same for an hour and the browser's cache (and a
 * CDN's, with the objects' year-long Cache-Control) keeps working, while a leaked URL dies within two hours.
 */
import type { Knex } from 'knex';
import { presignGet } from './storage';
import type { VariantKind } from '../dto';

const HOUR = 3600_000;

export async function variantUrl(key: string): Promise<string> {
  const signingDate = new Date(Math.floor(Date.now() / HOUR) * HOUR);
  return presignGet(key, { expiresIn: 2 * 3600, signingDate });
}

/** Cache header for content-addressed variants: the same key always holds the same bytes. */
export const IMMUTABLE = 'public, max-age=31536000, immutable';

/**
 * The app's own address for a variant: small in listings (a gallery of 500 frames stays a small
 * answer on a phone), checked per request, and changing whenever the variant's bytes change (its
 * key is their hash), so a browser never shows a stale crop.
 */
export function mediaPath(variantId: string, objectKey: string): string {
  const hash = objectKey.slice(objectKey.lastIndexOf('/') + 1).split('.')[0]!.slice(0, 12);
  return `/media/${variantId}?v=${hash}`;
}

/** Joins each frame `f`'s variant of one kind under `alias`; a left join keeps frames that have none yet. */
export function joinVariant(q: Knex.QueryBuilder, alias: string, kind: VariantKind, how: 'join' | 'leftJoin' = 'join'): Knex.QueryBuilder {
  return q[how](`frame_variants as ${alias}`, (j) => j.on(`${alias}.frame_id`, 'f.id').andOnVal(`${alias}.kind`, kind));
}

/** The columns `variantImage` reads back for a variant joined under `alias`. */
export const variantColumns = (alias: string) => [`${alias}.id as ${alias}_id`, `${alias}.object_key as ${alias}_key`, `${alias}.width as ${alias}_w`, `${alias}.height as ${alias}_h`];

/** A joined variant as an image for the browser (our media address and its size), or null when there is none. */
export function variantImage(row: Record<string, any>, alias: string): { url: string; width: number; height: number } | null {
  const key = row[`${alias}_key`];
  return key ? { url: mediaPath(row[`${alias}_id`], key), width: row[`${alias}_w`], height: row[`${alias}_h`] } : null;
}
