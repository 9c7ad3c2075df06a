import { all, type Row } from './types';

/** Variants (of a frame in shoot B): members of the studio see all; that shoot's client sees only thumbnails and proofs. */
export const rows: Record<string, Row[]> = {
  'media/[variantId]': [
    { method: 'GET', path: (w) => `/media/${w.variantThumbA}`, expect: { ...all(404), ownerA: 302, retoucherA: 302, clientB: 302 } },
    { method: 'GET', path: (w) => `/media/${w.variantCropA}`, expect: { ...all(404), ownerA: 302, retoucherA: 302 } },
    { method: 'GET', path: () => '/media/not-a-uuid', expect: all(404) },
  ],
};
