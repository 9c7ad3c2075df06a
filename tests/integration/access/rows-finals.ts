import { all, clientApi, memberApi, type Row, type World } from './types';

/**
 * Finals, hand-off, downloads, archive and delete. No row changes lasting state: shoot A is still in
 * proofing, so every finals action there is refused (409) after access is granted, and the
 * archived shoot refuses archiving, hand-off and removals the same way. Those statuses still prove
 * who got through. A client's finals answer 409 before hand-off.
 */
const NO_SUCH = '00000000-0000-4000-8000-000000000000';
const shootPageA = { ...all(302), ownerA: 200, retoucherA: 200, ownerB: 404 };
const finalKey = (w: World, shootId: string) => `studios/${w.studioA}/shoots/${shootId}/finals/${NO_SUCH}.jpg`;

export const rows: Record<string, Row[]> = {
  'desk/shoots/[shootId]/finals': [
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootA}/finals`, expect: shootPageA },
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootOther}/finals`, expect: { ...all(302), ownerA: 404, retoucherA: 404, ownerB: 200 } },
  ],
  'api/shoots/[shootId]/finals/index': [
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals`, expect: memberApi(200, 200, 404) },
    { method: 'GET', path: (w) => `/api/shoots/${w.shootOther}/finals`, expect: memberApi(404, 404, 200) },
    // Picks are not in yet, so no final is taken.
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals`, body: (w) => ({ key: finalKey(w, w.shootA), name: 'HLP_2041-edit.jpg', size: 1000 }), expect: memberApi(409, 409, 404) },
    // A key under another shoot's prefix is not this shoot's upload.
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals`, body: (w) => ({ key: finalKey(w, w.shootB), name: 'x.jpg', size: 1000 }), expect: memberApi(403, 403, 404) },
  ],
  'api/shoots/[shootId]/finals/uploads/sign': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals/uploads/sign`, body: () => ({ method: 'PUT', key: '', fileName: 'HLP_2041-edit.jpg', size: 1000 }), expect: memberApi(409, 409, 404) },
    { method: 'POST', path: (w) => `/api/shoots/${w.shootArchived}/finals/uploads/sign`, body: () => ({ method: 'PUT', key: '', fileName: 'a.jpg', size: 1000 }), expect: memberApi(409, 409, 404) },
  ],
  'api/shoots/[shootId]/finals/[finalId]/index': [
    { method: 'DELETE', path: (w) => `/api/shoots/${w.shootArchived}/finals/${NO_SUCH}`, expect: memberApi(409, 409, 404) },
    { method: 'DELETE', path: (w) => `/api/shoots/${w.shootA}/finals/not-an-id`, expect: memberApi(404, 404, 404) },
  ],
  'api/shoots/[shootId]/finals/[finalId]/match': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals/${NO_SUCH}/match`, body: () => ({ frameId: NO_SUCH }), expect: memberApi(409, 409, 404) },
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals/${NO_SUCH}/match`, body: () => ({}), expect: memberApi(422, 422, 404) },
  ],
  'api/shoots/[shootId]/finals/[finalId]/download': [
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals/${NO_SUCH}/download?kind=full`, expect: memberApi(404, 404, 404) },
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals/${NO_SUCH}/download?kind=poster`, expect: memberApi(400, 400, 404) },
  ],
  'api/shoots/[shootId]/finals/[finalId]/file': [
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals/${NO_SUCH}/file`, expect: memberApi(404, 404, 404) },
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals/not-an-id/file`, expect: memberApi(404, 404, 404) },
  ],
  'api/shoots/[shootId]/finals/zip': [
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals/zip`, expect: memberApi(409, 409, 404) },
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/finals/zip?set=crops`, expect: memberApi(409, 409, 404) },
  ],
  'api/shoots/[shootId]/finals/extend': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals/extend`, body: () => ({ days: 7 }), expect: memberApi(409, 403, 404) },
    // The body is checked before the shoot is looked up, so B's owner learns nothing from it.
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals/extend`, body: () => ({ days: 0 }), expect: memberApi(422, 403, 422) },
  ],
  'api/shoots/[shootId]/finals/announce': [
    // Shoot A has not been handed off: the owner gets through and is told so.
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/finals/announce`, body: () => ({}), expect: memberApi(409, 403, 404) },
  ],
  'api/shoots/[shootId]/hand-off': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/hand-off`, body: () => ({}), expect: memberApi(409, 403, 404) },
    { method: 'POST', path: (w) => `/api/shoots/${w.shootArchived}/hand-off`, body: () => ({ partial: true }), expect: memberApi(409, 403, 404) },
  ],
  'api/shoots/[shootId]/archive': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootArchived}/archive`, body: () => ({}), expect: memberApi(409, 403, 404) },
  ],
  'api/shoots/[shootId]/restore': [
    // Shoot A is not archived: the owner gets through and is told so; nothing changes.
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/restore`, body: () => ({}), expect: memberApi(409, 403, 404) },
    { method: 'POST', path: (w) => `/api/shoots/not-an-id/restore`, body: () => ({}), expect: memberApi(404, 403, 404) },
  ],
  'api/shoots/[shootId]/index': [
    // A title that is not the shoot's: the owner passes every check and is asked to type it exactly.
    { method: 'DELETE', path: (w) => `/api/shoots/${w.shootA}`, body: () => ({ title: 'Not the title' }), expect: memberApi(422, 403, 404) },
    { method: 'DELETE', path: (w) => `/api/shoots/${w.shootA}`, body: () => ({}), expect: memberApi(422, 403, 422) },
  ],
  'api/frames/[frameId]/original': [
    // frameA was refused and its file removed: access is granted, the file is gone (409).
    { method: 'GET', path: (w) => `/api/frames/${w.frameA}/original`, expect: memberApi(409, 409, 404) },
    { method: 'GET', path: (w) => `/api/frames/${w.frameOther}/original`, expect: memberApi(404, 404, 409) },
    { method: 'GET', path: () => '/api/frames/not-an-id/original', expect: memberApi(404, 404, 404) },
  ],
  'api/gallery/[shootId]/finals/index': [
    { method: 'GET', path: (w) => `/api/gallery/${w.shootA}/finals`, expect: clientApi(409) },
    { method: 'GET', path: (w) => `/api/gallery/${w.shootOther}/finals`, expect: all(401) },
  ],
  'api/gallery/[shootId]/finals/[finalId]': [
    { method: 'GET', path: (w) => `/api/gallery/${w.shootA}/finals/${NO_SUCH}?kind=full`, expect: clientApi(409) },
    { method: 'GET', path: (w) => `/api/gallery/${w.shootOther}/finals/${NO_SUCH}?kind=full`, expect: all(401) },
  ],
  'api/gallery/[shootId]/finals/zip': [
    { method: 'GET', path: (w) => `/api/gallery/${w.shootA}/finals/zip`, expect: clientApi(409) },
    { method: 'GET', path: (w) => `/api/gallery/${w.shootA}/finals/zip?set=crops`, expect: clientApi(409) },
  ],
};
