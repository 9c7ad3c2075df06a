/**
 * Load on the picks API and the gallery listing, against a running Fillcard on this machine.
 *
 *   . .data/test/env && npx tsx bench/picks-load.ts
 *
 * 1. 50 clients, each on a shoot of its own, toggle picks 100 times each, all at once (each
 *    client's requests one after another, as one browser sends them). Afterwards every client's
 *    picks in the database must equal the last state it sent; no answer may be a 5xx.
 * 2. A 500-frame gallery listing fetched by 20 concurrent requests, beside the health route's
 *    figure from the same run, so the machine's own speed can be read off.
 *
 * Loopback only: it refuses any other address. Bounded: a fixed number of requests and a time
 * limit. It writes a studio of its own into the database and removes it afterwards.
 */
import { randomUUID } from 'node:crypto';
import { pathToFileURL } from 'node:url';
import { db, closeDb } from '../src/lib/server/db';
import { issueViewingLink } from '../src/lib/server/client-access';
import { keys } from '../src/lib/server/storage';
// mulberry32, seeded: the same toggles on every run.
import { prng } from '../scripts/lib/synthetic-portrait';

const CLIENTS = 50;
const TOGGLES_PER_CLIENT = 100;
const FRAMES_PER_SHOOT = 24;
const LISTING_FRAMES = 500;
const LISTING_CONCURRENCY = 20;
const LISTING_REQUESTS = 200;
const TIME_LIMIT_MS = 5 * 60_000;

interface Timing {
  ms: number;
  status: number;
}

export interface PicksBenchResult {
  toggles: { requests: number; seconds: number; perSecond: number; p50: number; p95: number; p99: number; errors5xx: number; mismatchedClients: number; otherStatuses: Record<string, number> };
  listing: { frames: number; coldMs: number; p50: number; p95: number; perSecond: number; bytes: number; errors: number };
  health: { p50: number; p95: number; perSecond: number; errors: number };
  table: string;
}

function assertLoopback(origin: string) {
  const host = new URL(origin).hostname;
  if (!['127.0.0.1', 'localhost', '[::1]', '::1'].includes(host)) {
    throw new Error(`picks bench runs against this machine only; PUBLIC_ORIGIN is ${origin}`);
  }
}

const percentile = (sorted: number[], p: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] : NaN);
const round = (v: number, d = 1) => Math.round(v * 10 ** d) / 10 ** d;

/** A cookie-keeping client of one shoot, opened through its viewing link. */
class Client {
  cookie = '';
  constructor(private origin: string) {}
  async open(token: string) {
    const res = await fetch(`${this.origin}/g/${token}`, { redirect: 'manual', headers: { Origin: this.origin } });
    await res.arrayBuffer();
    const set = res.headers.getSetCookie().map((c) => c.split(';')[0]).find((c) => c.startsWith('fillcard_gallery='));
    if (res.status !== 303 || !set) throw new Error(`viewing link answered ${res.status}`);
    this.cookie = set;
  }
  async send(method: string, path: string, body?: unknown): Promise<Timing & { bytes: number }> {
    const started = performance.now();
    const res = await fetch(this.origin + path, {
      method,
      headers: { Origin: this.origin, Cookie: this.cookie, ...(body === undefined ? {} : { 'Content-Type': 'application/json' }) },
      body: body === undefined ? undefined : JSON.stringify(body),
      redirect: 'manual',
    });
    const buf = await res.arrayBuffer();
    return { ms: performance.now() - started, status: res.status, bytes: buf.byteLength };
  }
}

async function makeBenchStudio() {
  const tag = randomUUID().slice(0, 8);
  const [studio] = await db()('studios').insert({ name: `Bench Studio ${tag}` }).returning('id');
  return { studioId: studio.id as string, tag };
}

async function makeBenchShoot(studioId: string, tag: string, i: number, frames: number) {
  const [client] = await db()('clients').insert({ studio_id: studioId, name: `Bench client ${i}`, email: `bench-${tag}-${i}@example.test` }).returning('id');
  const [shoot] = await db()('shoots').insert({
    studio_id: studioId, client_id: client.id, title: `Bench sitting ${i}`, shot_on: new Date(), stage: 'proofing',
    allowance: 10, extra_price_minor: 2500, currency: 'EUR', proof_expires_at: new Date(Date.now() + 7 * 86400_000),
  }).returning('id');
  // Frames in bulk: the listing reads rows and signs URLs; it never fetches the images themselves.
  const rows = Array.from({ length: frames }, (_, n) => ({
    studio_id: studioId, shoot_id: shoot.id, object_key: keys.original(studioId, shoot.id, 'jpg'),
    original_name: `BN_${String(n + 1).padStart(4, '0')}.jpg`, bytes: 1_000_000, width: 6000, height: 4000, state: 'ready',
    taken_at: new Date(Date.UTC(2026, 0, 1, 10, 0, n)),
  }));
  const ids: string[] = [];
  for (let k = 0; k < rows.length; k += 500) {
    ids.push(...(await db()('frames').insert(rows.slice(k, k + 500)).returning('id')).map((r) => r.id as string));
  }
  const variants = ids.flatMap((id, n) => [
    { studio_id: studioId, frame_id: id, kind: 'thumb', object_key: keys.variant(studioId, shoot.id, `${tag}${n}t`.padEnd(64, '0'), 'jpg'), width: 480, height: 320, bytes: 40_000 },
    { studio_id: studioId, frame_id: id, kind: 'proof', object_key: keys.variant(studioId, shoot.id, `${tag}${n}p`.padEnd(64, '0'), 'jpg'), width: 2048, height: 1365, bytes: 400_000 },
  ]);
  for (let k = 0; k < variants.length; k += 1000) await db()('frame_variants').insert(variants.slice(k, k + 1000));
  const token = await issueViewingLink(shoot.id, studioId);
  return { shootId: shoot.id as string, frameIds: ids, token };
}

async function pool<T>(count: number, concurrency: number, job: (i: number) => Promise<T>): Promise<T[]> {
  const out: T[] = new Array(count);
  let next = 0;
  await Promise.all(Array.from({ length: concurrency }, async () => {
    while (next < count) {
      const i = next++;
      out[i] = await job(i);
    }
  }));
  return out;
}

export async function benchPicks(origin = process.env.PUBLIC_ORIGIN ?? 'http://127.0.0.1:4331'): Promise<PicksBenchResult> {
  assertLoopback(origin);
  const deadline = Date.now() + TIME_LIMIT_MS;
  const checkTime = () => {
    if (Date.now() > deadline) throw new Error('picks bench ran past its time limit');
  };
  const { studioId, tag } = await makeBenchStudio();
  try {
    // ---- 1. toggles ---------------------------------------------------------------------------
    const shoots = [];
    for (let i = 0; i < CLIENTS; i++) shoots.push(await makeBenchShoot(studioId, tag, i, FRAMES_PER_SHOOT));
    const clients = await Promise.all(shoots.map(async (s) => {
      const c = new Client(origin);
      await c.open(s.token);
      return c;
    }));

    const timings: Timing[] = [];
    const expected = shoots.map(() => new Map<string, string>());
    const started = performance.now();
    await Promise.all(shoots.map(async (s, ci) => {
      const random = prng(1000 + ci);
      const state = expected[ci];
      for (let n = 0; n < TOGGLES_PER_CLIENT; n++) {
        checkTime();
        const frameId = s.frameIds[Math.floor(random() * s.frameIds.length)];
        const roll = random();
        let t: Timing;
        if (state.has(frameId) && roll < 0.45) {
          t = await clients[ci].send('DELETE', `/api/gallery/${s.shootId}/picks/${frameId}`);
          if (t.status === 200) state.delete(frameId);
        } else if (roll < 0.7) {
          // A pick without a note keeps the note the pick has.
          t = await clients[ci].send('PUT', `/api/gallery/${s.shootId}/picks/${frameId}`, {});
          if (t.status === 200) state.set(frameId, state.get(frameId) ?? '');
        } else {
          const note = `client ${ci} toggle ${n}`;
          t = await clients[ci].send('PUT', `/api/gallery/${s.shootId}/picks/${frameId}`, { note });
          if (t.status === 200) state.set(frameId, note);
        }
        timings.push(t);
      }
    }));
    const seconds = (performance.now() - started) / 1000;

    let mismatchedClients = 0;
    for (const [ci, s] of shoots.entries()) {
      const rows = await db()('picks').where({ shoot_id: s.shootId }).select('frame_id', 'note');
      const got = new Map(rows.map((r) => [r.frame_id as string, r.note as string]));
      const want = expected[ci];
      const same = got.size === want.size && [...want].every(([k, v]) => got.get(k) === v);
      if (!same) mismatchedClients++;
    }
    const sorted = timings.map((t) => t.ms).sort((a, b) => a - b);
    const otherStatuses: Record<string, number> = {};
    for (const t of timings) if (t.status !== 200) otherStatuses[t.status] = (otherStatuses[t.status] ?? 0) + 1;
    const toggles = {
      requests: timings.length,
      seconds: round(seconds, 2),
      perSecond: round(timings.length / seconds, 0),
      p50: round(percentile(sorted, 50)),
      p95: round(percentile(sorted, 95)),
      p99: round(percentile(sorted, 99)),
      errors5xx: timings.filter((t) => t.status >= 500).length,
      mismatchedClients,
      otherStatuses,
    };

    // ---- 2. a 500-frame listing beside the health route ----------------------------------------
    checkTime();
    const big = await makeBenchShoot(studioId, tag, CLIENTS, LISTING_FRAMES);
    const viewer = new Client(origin);
    await viewer.open(big.token);
    const listPath = `/api/gallery/${big.shootId}/frames`;
    // The first request signs every URL; later ones within the hour reuse them.
    const cold = await viewer.send('GET', listPath);
    if (cold.status !== 200) throw new Error(`listing answered ${cold.status}`);
    for (let w = 0; w < 3; w++) await viewer.send('GET', listPath);

    const measure = async (path: string, c: Client) => {
      const t0 = performance.now();
      const res = await pool(LISTING_REQUESTS, LISTING_CONCURRENCY, () => {
        checkTime();
        return c.send('GET', path);
      });
      const secs = (performance.now() - t0) / 1000;
      const ms = res.map((r) => r.ms).sort((a, b) => a - b);
      return { p50: round(percentile(ms, 50)), p95: round(percentile(ms, 95)), perSecond: round(res.length / secs, 0), errors: res.filter((r) => r.status !== 200).length, bytes: res[0]?.bytes ?? 0 };
    };
    const healthClient = new Client(origin);
    const health = await measure('/api/health', healthClient);
    const list = await measure(listPath, viewer);
    const health2 = await measure('/api/health', healthClient);
    const healthBoth = { p50: Math.max(health.p50, health2.p50), p95: Math.max(health.p95, health2.p95), perSecond: Math.min(health.perSecond, health2.perSecond), errors: health.errors + health2.errors };
    const listing = { frames: LISTING_FRAMES, coldMs: round(cold.ms), p50: list.p50, p95: list.p95, perSecond: list.perSecond, bytes: list.bytes, errors: list.errors };

    const table = [
      '| measure | requests | concurrency | req/s | p50 ms | p95 ms | notes |',
      '| --- | ---: | ---: | ---: | ---: | ---: | --- |',
      `| pick toggles (PUT/DELETE) | ${toggles.requests} | ${CLIENTS} | ${toggles.perSecond} | ${toggles.p50} | ${toggles.p95} | p99 ${toggles.p99} ms; 5xx: ${toggles.errors5xx}; clients whose stored picks differ from their last state: ${toggles.mismatchedClients} of ${CLIENTS} |`,
      `| gallery listing, ${LISTING_FRAMES} frames | ${LISTING_REQUESTS} | ${LISTING_CONCURRENCY} | ${listing.perSecond} | ${listing.p50} | ${listing.p95} | ${Math.round(listing.bytes / 1024)} KiB per answer; first (cold, signs every URL) ${listing.coldMs} ms; non-200: ${listing.errors} |`,
      `| health route | ${LISTING_REQUESTS * 2} | ${LISTING_CONCURRENCY} | ${healthBoth.perSecond} | ${healthBoth.p50} | ${healthBoth.p95} | before and after the listing, worse of the two; non-200: ${healthBoth.errors} |`,
    ].join('\n');
    return { toggles, listing, health: healthBoth, table };
  } finally {
    await cleanUp(studioId);
  }
}

async function cleanUp(studioId: string) {
  try {
    await db().transaction(async (trx) => {
      await trx('shoots').where({ studio_id: studioId }).delete();
      await trx('clients').where({ studio_id: studioId }).delete();
      await trx('studios').where({ id: studioId }).delete();
    });
  } catch (err) {
    console.error('[bench] could not remove the bench studio:', (err as Error).message);
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  benchPicks()
    .then((r) => {
      console.log(r.table);
      const ok = r.toggles.errors5xx === 0 && r.toggles.mismatchedClients === 0 && r.listing.errors === 0;
      if (!ok) console.error('picks bench: FAILED (see the table)');
      process.exitCode = ok ? 0 : 1;
    })
    .catch((err) => {
      console.error(err);
      process.exitCode = 1;
    })
    .finally(() => closeDb());
}
