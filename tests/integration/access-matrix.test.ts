/**
 * Every page and API route against every kind of caller (OWASP Authorization Testing Automation:
 * a roles × routes table with expected status codes; WSTG-ATHZ-04 for ids of another studio).
 * The route list is read from src/pages, so a new route without a row fails this test.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { readdirSync } from 'node:fs';
import path from 'node:path';
import { randomUUID } from 'node:crypto';
import { Agent } from '../support/http';
import { makeStudio, makeShoot, memberAgent, clientAgent } from '../support/factories';
import { db } from '../../src/lib/server/db';

import { PRINCIPALS, type Principal, type Row, type World } from './access/types';

// Every rows-*.ts file contributes the rows of its area; together they must cover src/pages.
const modules = import.meta.glob<{ rows: Record<string, Row[]> }>('./access/rows-*.ts', { eager: true });
// Two areas may own rows of one route file (DELETE and PATCH of a shoot): their rows are joined, never replaced.
const MATRIX: Record<string, Row[]> = {};
for (const m of Object.values(modules)) for (const [file, rows] of Object.entries(m.rows)) (MATRIX[file] ??= []).push(...rows);

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
    const locked = await makeShoot(a.studioId, { stage: 'picks_in' });
    const archived = await makeShoot(a.studioId, { stage: 'archived' });
    // Frames for the frame routes, inserted directly (failed unless said), with keys under their shoot's prefix.
    const frame = async (studioId: string, shootId: string, state: 'failed' | 'ready' = 'failed') => {
      const id = randomUUID();
      await db()('frames').insert({ id, studio_id: studioId, shoot_id: shootId, object_key: `studios/${studioId}/shoots/${shootId}/originals/${id}.jpg`, original_name: 'matrix.jpg', bytes: 1000, state, error: state === 'failed' ? 'Test frame.' : null });
      return id;
    };
    // A ready frame of shoot B (same studio) with a thumbnail and a crop, for the media route; shoot A
    // stays without ready frames so the rows above keep their meaning.
    const readyFrame = randomUUID();
    await db()('frames').insert({ id: readyFrame, studio_id: a.studioId, shoot_id: shootB.shoot.id, object_key: `studios/${a.studioId}/shoots/${shootB.shoot.id}/originals/${readyFrame}.jpg`, original_name: 'ready.jpg', bytes: 1000, state: 'ready' });
    const variant = async (kind: string) => (await db()('frame_variants').insert({ studio_id: a.studioId, frame_id: readyFrame, kind, object_key: `studios/${a.studioId}/shoots/${shootB.shoot.id}/variants/${randomUUID().replace(/-/g, '')}.jpg`, width: 10, height: 10, bytes: 10 }).returning('id'))[0].id as string;
    const variantThumbA = await variant('thumb');
    const variantCropA = await variant('crop_4x5');
    world = {
      variantThumbA, variantCropA,
      shootA: shootA.shoot.id, shootB: shootB.shoot.id, shootOther: other.shoot.id, tokenA: shootA.token, clientA: shootA.client.id,
      studioA: a.studioId, frameA: await frame(a.studioId, shootA.shoot.id), frameLocked: await frame(a.studioId, locked.shoot.id, 'ready'), frameOther: await frame(b.studioId, other.shoot.id),
      shootArchived: archived.shoot.id,
    };

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
