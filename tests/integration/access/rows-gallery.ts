import { all, clientApi, memberApi, type Principal, type Row } from './types';

/**
 * The client's gallery and the studio's Client & picks tab. The rows never change shoot A's state:
 * shoot A has no frames, so sending its link is refused (409) and its picks cannot be sent (409);
 * the link withdrawn here is the one of studio B's shoot, which no other row uses.
 */
const NO_SUCH_FRAME = '00000000-0000-4000-8000-000000000000';
const shootPage: Record<Principal, number> = { ...all(302), ownerA: 200, retoucherA: 200, ownerB: 404 };

export const rows: Record<string, Row[]> = {
  'desk/shoots/[shootId]/client': [
    { method: 'GET', path: (w) => `/desk/shoots/${w.shootA}/client`, expect: shootPage },
    { method: 'POST', path: (w) => `/desk/shoots/${w.shootA}/client`, form: true, body: () => ({ intent: 'noop' }), expect: shootPage },
    // Owners may send; a retoucher is refused; shoot A has nothing ready to show yet.
    { method: 'POST', path: (w) => `/desk/shoots/${w.shootA}/client`, form: true, body: () => ({ intent: 'send', message: '' }), expect: { ...shootPage, ownerA: 409, retoucherA: 403 } },
    { method: 'POST', path: (w) => `/desk/shoots/${w.shootA}/client`, form: true, body: () => ({ intent: 'reopen' }), expect: { ...shootPage, ownerA: 409, retoucherA: 403 } },
  ],
  'api/shoots/[shootId]/link': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/link`, body: () => ({ message: 'Hello' }), expect: memberApi(409, 403, 404) },
    { method: 'DELETE', path: (w) => `/api/shoots/${w.shootOther}/link`, expect: memberApi(404, 403, 200) },
    { method: 'POST', path: () => '/api/shoots/not-an-id/link', body: () => ({}), expect: memberApi(404, 403, 404) },
  ],
  'api/shoots/[shootId]/picks/reopen': [
    { method: 'POST', path: (w) => `/api/shoots/${w.shootA}/picks/reopen`, body: () => ({}), expect: memberApi(409, 403, 404) },
  ],
  'api/gallery/[shootId]/frames': [
    { method: 'GET', path: (w) => `/api/gallery/${w.shootA}/frames`, expect: clientApi(200) },
    { method: 'GET', path: (w) => `/api/gallery/${w.shootOther}/frames`, expect: all(401) },
    { method: 'GET', path: () => '/api/gallery/not-an-id/frames', expect: all(401) },
  ],
  'api/gallery/[shootId]/picks/[frameId]': [
    { method: 'PUT', path: (w) => `/api/gallery/${w.shootA}/picks/${NO_SUCH_FRAME}`, body: () => ({ note: 'x' }), expect: clientApi(404) },
    { method: 'DELETE', path: (w) => `/api/gallery/${w.shootA}/picks/${NO_SUCH_FRAME}`, expect: clientApi(404) },
    { method: 'PUT', path: (w) => `/api/gallery/${w.shootA}/picks/not-an-id`, body: () => ({}), expect: clientApi(404) },
    { method: 'PUT', path: (w) => `/api/gallery/${w.shootOther}/picks/${NO_SUCH_FRAME}`, body: () => ({}), expect: all(401) },
  ],
  'api/gallery/[shootId]/submit': [
    { method: 'POST', path: (w) => `/api/gallery/${w.shootA}/submit`, body: () => ({}), expect: clientApi(409) },
    { method: 'POST', path: (w) => `/api/gallery/${w.shootOther}/submit`, body: () => ({}), expect: all(401) },
  ],
  'gallery/[shootId]/review': [
    { method: 'GET', path: (w) => `/gallery/${w.shootA}/review`, expect: { ...all(401), clientA: 200 } },
    { method: 'GET', path: (w) => `/gallery/${w.shootOther}/review`, expect: all(401) },
  ],
};
