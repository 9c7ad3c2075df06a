import { all, memberApi, memberPage, type Row, type World } from './types';

/**
 * Shoot creation, uploads and frames. Where an owner's request would change lasting state, the row
 * is built so the owner passes every access check and then meets a harmless refusal of its own
 * (409 for a frame whose file is gone or whose shoot is locked, 422 for an object never uploaded):
 * that status still proves access was granted.
 */
const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);

const newShoot = (w: World) => ({
  // Shoot A's client: studio B's owner must not be able to book a shoot for it.
  client: { kind: 'existing', id: w.clientA },
  title: 'Matrix sitting',
  shotOn: day(0),
  allowance: 3,
  extraPriceMinor: 2500,
  currency: 'EUR',
  taxRateBp: 0,
  taxMode: 'exclusive',
  proofExpiresOn: day(14),
});

const originalKey = (w: World, id: string) => `studios/${w.studioA}/shoots/${w.shootA}/originals/${id}.jpg`;

/** A shoot page of studio A: members of A see it (retouchers too), B's owner finds nothing, others sign in. */
const shootPageA = { ...all(302), ownerA: 200, retoucherA: 200, ownerB: 404 };

export const rows: Record<string, Row[]> = {
  'desk/shoots/new': [{ method: 'GET', path: () => '/desk/shoots/new', expect: memberPage(true) }],
  'desk/shoots/[shootId]/index': [
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootA}`, expect: shootPageA },
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootOther}`, expect: { ...all(302), ownerA: 404, retoucherA: 404, ownerB: 200 } },
    { method: 'GET', path: () => '/desk/shoots/not-a-shoot-id', expect: { ...all(302), ownerA: 404, retoucherA: 404, ownerB: 404 } },
  ],
  // Shoot details: owners only. A title longer than allowed is refused after access is granted (422), so
  // nothing about shoot A changes; an archived shoot refuses any change (409). The page of studio B's
  // shoot is 403 for a retoucher of A: the role is checked before the shoot is looked up.
  'desk/shoots/[shootId]/details': [
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootA}/details`, expect: { ...all(302), ownerA: 200, retoucherA: 403, ownerB: 404 } },
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootOther}/details`, expect: { ...all(302), ownerA: 404, retoucherA: 403, ownerB: 200 } },
  ],
  'api/shoots/[shootId]/index': [
    { method: 'PATCH', path: (w) => `/api/shoots/${w.shootA}`, body: () => ({ title: 'x'.repeat(161) }), expect: memberApi(422, 403, 422) },
    { method: 'PATCH', path: (w) => `/api/shoots/${w.shootArchived}`, body: () => ({ title: 'Matrix title' }), expect: memberApi(409, 403, 404) },
    // An empty change: studio B's owner gets through and nothing changes; studio A's owner finds nothing.
    { method: 'PATCH', path: (w) => `/api/shoots/${w.shootOther}`, body: () => ({}), expect: memberApi(404, 403, 200) },
    { method: 'PATCH', path: () => '/api/shoots/not-a-shoot-id', body: () => ({ title: 'Matrix title' }), expect: memberApi(404, 403, 404) },
  ],
  'api/shoots/index': [{ method: 'POST', path: () => '/api/shoots', body: newShoot, expect: memberApi(201, 403, 404) }],
  'api/shoots/[shootId]/uploads/sign': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/uploads/sign`, body: () => ({ method: 'PUT', key: '', fileName: 'matrix.jpg', size: 1000 }), expect: memberApi(200, 403, 404) },
    { method: 'POST', path: (w) => `/api/shoots/${w.shootOther}/uploads/sign`, body: () => ({ method: 'PUT', key: '', fileName: 'matrix.jpg', size: 1000 }), expect: memberApi(404, 403, 200) },
    // A key of studio A's shoot, asked for on studio B's own shoot: refused as not belonging there.
    {
      method: 'POST',
      path: (w) => `/api/shoots/${w.shootOther}/uploads/sign`,
      body: (w) => ({ method: 'PUT', key: originalKey(w, w.frameA), uploadId: 'u1', partNumber: 1 }),
      expect: memberApi(404, 403, 403),
    },
  ],
  'api/shoots/[shootId]/frames/index': [
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/frames`, expect: memberApi(200, 200, 404) },
    { method: 'GET', path: (w) => `/api/shoots/${w.shootOther}/frames`, expect: memberApi(404, 404, 200) },
    // frameA's key is registered already: the owner gets that frame back (200), nothing new is made.
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/frames`, body: (w) => ({ key: originalKey(w, w.frameA), name: 'matrix.jpg', size: 1000 }), expect: memberApi(200, 403, 404) },
    // A key that was never uploaded: the owner is told it did not arrive.
    {
      method: 'POST',
      path: (w) => `/api/shoots/${w.shootA}/frames`,
      body: (w) => ({ key: originalKey(w, '00000000-0000-4000-8000-000000000000'), name: 'missing.jpg', size: 1000 }),
      expect: memberApi(422, 403, 404),
    },
  ],
  'api/frames/[frameId]/index': [
    { method: 'PATCH', path: (w) => `/api/frames/${w.frameA}`, body: () => ({ hidden: false }), expect: memberApi(200, 403, 404) },
    { method: 'PATCH', path: (w) => `/api/frames/${w.frameOther}`, body: () => ({ hidden: false }), expect: memberApi(404, 403, 200) },
    // Moving the focus of a frame that was never built is refused after access is granted.
    { method: 'PATCH', path: (w) => `/api/frames/${w.frameA}`, body: () => ({ focus: { x: 0.5, y: 0.5 } }), expect: memberApi(409, 403, 404) },
    // The client has sent picks for this shoot, so even its owner cannot delete the frame now.
    { method: 'DELETE', path: (w) => `/api/frames/${w.frameLocked}`, expect: memberApi(409, 403, 404) },
    { method: 'PATCH', path: () => '/api/frames/not-a-frame-id', body: () => ({ hidden: true }), expect: memberApi(404, 403, 404) },
  ],
  'api/frames/[frameId]/retry': [
    // frameA's original is not in storage: the owner is told to upload it again (409).
    { method: 'POST', path: (w) => `/api/frames/${w.frameA}/retry`, body: () => ({}), expect: memberApi(409, 403, 404) },
    { method: 'POST', path: (w) => `/api/frames/${w.frameOther}/retry`, body: () => ({}), expect: memberApi(404, 403, 409) },
  ],
};
