import { all, memberApi, memberPage, type Principal, type Row } from './types';

/** A studio page about one shoot of studio A: owner B sees a missing page, not a refusal. */
const shootPage: Record<Principal, number> = { ...all(302), ownerA: 200, retoucherA: 200, ownerB: 404 };
const NO_SUCH_CLIENT = '00000000-0000-4000-8000-000000000000';

/** The studio desk: shoots table, clients, settings, light notes and insights. */
export const rows: Record<string, Row[]> = {
  'api/desk/shoots': [
    { method: 'GET', path: () => '/api/desk/shoots', expect: memberApi(200, 200, 200) },
    { method: 'GET', path: () => '/api/desk/shoots?sort=extras', expect: memberApi(200, 403, 200) },
  ],
  'desk/clients/index': [{ method: 'GET', path: () => '/desk/clients', expect: memberPage(true) }],
  'desk/clients/[clientId]': [
    { method: 'GET', path: (w) => `/desk/clients/${w.clientA}`, expect: { ...memberPage(true), ownerB: 404 } },
    { method: 'GET', path: () => `/desk/clients/${NO_SUCH_CLIENT}`, expect: { ...memberPage(true), ownerA: 404, ownerB: 404 } },
  ],
  'api/clients/index': [
    { method: 'GET', path: () => '/api/clients', expect: memberApi(200, 403, 200) },
    { method: 'POST', path: () => '/api/clients', body: () => ({}), expect: memberApi(422, 403, 422) },
  ],
  'api/clients/[clientId]': [
    { method: 'GET', path: (w) => `/api/clients/${w.clientA}`, expect: memberApi(200, 403, 404) },
    { method: 'PUT', path: (w) => `/api/clients/${w.clientA}`, body: () => ({}), expect: memberApi(422, 403, 404) },
    // Shoot A is not archived, so its client stays.
    { method: 'DELETE', path: (w) => `/api/clients/${w.clientA}`, expect: memberApi(409, 403, 404) },
    { method: 'GET', path: () => '/api/clients/not-an-id', expect: memberApi(404, 403, 404) },
  ],
  'desk/settings': [{ method: 'GET', path: () => '/desk/settings', expect: memberPage(true) }],
  'api/studio/settings': [
    { method: 'GET', path: () => '/api/studio/settings', expect: memberApi(200, 403, 200) },
    { method: 'PUT', path: () => '/api/studio/settings', body: () => ({}), expect: memberApi(422, 403, 422) },
  ],
  'api/studio/watermark-logo': [
    // A JSON body is no PNG.
    { method: 'PUT', path: () => '/api/studio/watermark-logo', body: () => ({}), expect: memberApi(422, 403, 422) },
    { method: 'DELETE', path: () => '/api/studio/watermark-logo', expect: memberApi(200, 403, 200) },
  ],
  'api/studio/watermark-preview': [
    { method: 'GET', path: () => '/api/studio/watermark-preview?text=PROOF&opacity=30', expect: memberApi(200, 403, 200) },
  ],
  'desk/shoots/[shootId]/light': [{ method: 'GET', path: (w) => `/desk/shoots/${w.shootA}/light`, expect: shootPage }],
  'desk/shoots/[shootId]/insights': [{ method: 'GET', path: (w) => `/desk/shoots/${w.shootA}/insights`, expect: shootPage }],
  'api/shoots/[shootId]/light-notes': [
    { method: 'GET', path: (w) => `/api/shoots/${w.shootA}/light-notes`, expect: memberApi(200, 200, 404) },
    { method: 'PUT', path: (w) => `/api/shoots/${w.shootA}/light-notes`, body: () => ({}), expect: memberApi(422, 403, 404) },
    // Studio B's own shoot: owner B reaches it, so the empty body is what is refused.
    { method: 'PUT', path: (w) => `/api/shoots/${w.shootOther}/light-notes`, body: () => ({}), expect: memberApi(404, 403, 422) },
  ],
  'desk/payments': [{ method: 'GET', path: () => '/desk/payments', expect: memberPage(true) }],
};
