import { all, memberPage, type Row } from './types';

/** One or more rows per file under src/pages (path relative to src/pages, no extension). */
export const rows: Record<string, Row[]> = {
  'index': [{ method: 'GET', path: () => '/', expect: { ...all(200), ownerA: 302, ownerB: 302, retoucherA: 302 } }],
  'signin': [{ method: 'GET', path: () => '/signin', expect: { ...all(200), ownerA: 302, ownerB: 302, retoucherA: 302 } }],
  'signup': [{ method: 'GET', path: () => '/signup', expect: { ...all(200), ownerA: 302, ownerB: 302, retoucherA: 302 } }],
  'signout': [{ method: 'GET', path: () => '/signout', expect: all(303) }],
  'account': [{ method: 'GET', path: () => '/account', expect: { ...all(302), ownerA: 200, ownerB: 200, retoucherA: 200 } }],
  'forbidden': [{ method: 'GET', path: () => '/forbidden', expect: all(403) }],
  '404': [{ method: 'GET', path: () => '/no-such-page-here', expect: all(404) }],
  '500': [], // rendered only when a page throws; covered by the error-page test
  'desk/index': [{ method: 'GET', path: () => '/desk', expect: memberPage(false) }],
  'desk/team': [
    { method: 'GET', path: () => '/desk/team', expect: memberPage(true) },
    { method: 'POST', path: () => '/desk/team', form: true, body: () => ({ intent: 'noop' }), expect: memberPage(true) },
  ],
  'invite/[token]': [{ method: 'GET', path: () => '/invite/aaaaaaaaaaaaaaaaaaaaaaaaaa', expect: all(410) }],
  'g/[token]': [
    { method: 'GET', path: () => '/g/aaaaaaaaaaaaaaaaaaaaaaaaaa', expect: all(404) },
    { method: 'GET', path: (w) => `/g/${w.tokenA}`, expect: all(303) },
  ],
  'gallery/[shootId]/index': [
    { method: 'GET', path: (w) => `/gallery/${w.shootA}`, expect: { ...all(401), clientA: 200, expiredClient: 401 } },
    { method: 'GET', path: (w) => `/gallery/${w.shootOther}`, expect: all(401) },
  ],
  'gallery/[shootId]/passcode': [
    { method: 'GET', path: (w) => `/gallery/${w.shootA}`.concat('/passcode'), expect: all(303) },
  ],
  'api/health': [{ method: 'GET', path: () => '/api/health', expect: all(200) }],
};

