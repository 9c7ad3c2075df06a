/**
 * Every page and API route against every kind of caller (OWASP Authorization Testing Automation:
 * a roles × routes table with expected status codes; WSTG-ATHZ-04 for ids of another studio).
 * The route list is read from src/pages, so a new route without a row fails this test.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { readdirSync } from 'node:fs';
import path from 'node:path';
import { Agent } from '../support/http';
import { makeStudio, makeShoot, memberAgent, clientAgent } from '../support/factories';
import { db } from '../../src/lib/server/db';

type Principal = 'anonymous' | 'clientA' | 'clientB' | 'ownerA' | 'retoucherA' | 'ownerB' | 'signedOut' | 'expiredClient';
const PRINCIPALS: Principal[] = ['anonymous', 'clientA', 'clientB', 'ownerA', 'retoucherA', 'ownerB', 'signedOut', 'expiredClient'];

interface World {
  shootA: string;
  shootB: string;
  shootOther: string; // a shoot of studio B
  tokenA: string;
}

interface Row {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  path: (w: World) => string;
  body?: (w: World) => unknown;
  form?: boolean;
  expect: Record<Principal, number>;
}

const all = (status: number): Record<Principal, number> => Object.fromEntries(PRINCIPALS.map((p) => [p, status])) as Record<Principal, number>;
/** Pages a member sees, others are sent to sign in. */
const memberPage = (ownerOnly: boolean): Record<Principal, number> => ({
  ...all(302), ownerA: 200, ownerB: 200, retoucherA: ownerOnly ? 403 : 200,
});

/** One or more rows per file under src/pages (path relative to src/pages, no extension). */
export const MATRIX: Record<string, Row[]> = {
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

function pageFiles(dir: string, base = dir): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((d) => {
    const p = path.join(dir, d.name);
    if (d.isDirectory()) return pageFiles(p, base);
    if (!/\.(astro|ts|tsx|js|md)$/.test(d.name) || /\.test\./.test(d.name)) return [];
    return [path.relative(base, p).replace(/\.(astro|ts|tsx|js|md)$/, '')];
  });
}

describe('access matrix', () => {
  const agents = {} as Record<Principal, Agent>;
  let world: World;

  beforeAll(async () => {
    const a = await makeStudio('MatrixA');
    const b = await makeStudio('MatrixB');
    const shootA = await makeShoot(a.studioId);
    const shootB = await makeShoot(a.studioId);
    const other = await makeShoot(b.studioId);
    const expiring = await makeShoot(a.studioId);
    world = { shootA: shootA.shoot.id, shootB: shootB.shoot.id, shootOther: other.shoot.id, tokenA: shootA.token };

    agents.anonymous = new Agent();
    agents.clientA = await clientAgent(shootA.token);
    agents.clientB = await clientAgent(shootB.token);
    agents.ownerA = await memberAgent(a.owner.email);
    agents.retoucherA = await memberAgent(a.retoucher.email);
    agents.ownerB = await memberAgent(b.owner.email);
    // Signed out: keeps the old cookie, as a stolen copy would.
    agents.signedOut = await memberAgent(a.owner.email);
    const stale = new Map(agents.signedOut.cookies);
    await agents.signedOut.postForm('/signout', {});
    agents.signedOut.cookies = stale;
    // A client whose gallery expired after entering.
    agents.expiredClient = await clientAgent(expiring.token);
    await db()('shoots').where({ id: expiring.shoot.id }).update({ proof_expires_at: new Date(Date.now() - 1000) });
  });

  it('has a row for every route in src/pages', () => {
    const files = pageFiles(path.resolve('src/pages'));
    const missing = files.filter((f) => !(f in MATRIX));
    expect(missing, `routes without a row in the access matrix: ${missing.join(', ')}`).toEqual([]);
  });

  for (const [file, rows] of Object.entries(MATRIX)) {
    rows.forEach((row, i) => {
      it(`${row.method} ${file} #${i + 1}`, async () => {
        const got: Record<string, number> = {};
        for (const p of PRINCIPALS) {
          const agent = agents[p].clone();
          const url = row.path(world);
          const body = row.body?.(world);
          const res = row.method === 'GET'
            ? await agent.get(url)
            : row.form
              ? await agent.postForm(url, body as Record<string, string>)
              : await agent.postJson(url, body, row.method);
          got[p] = res.status;
          await res.arrayBuffer();
        }
        expect(got).toEqual(row.expect);
      });
    });
  }
});
