/**
 * Soak: steady mixed traffic against a running Fillcard on this machine — gallery listings, pick
 * toggles, frame uploads and registrations with real processing — for a bounded time (default 3
 * minutes, at most 10). Reports throughput, p95 and p99 per kind, the error count (target 0), and the
 * app's and worker's memory at the start and the end (target: flat).
 *
 *   . .data/test-<n>/env && npx tsx bench/soak.ts [minutes]
 *
 * Loopback only. It makes a studio of its own and removes it afterwards.
 */
import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { pathToFileURL } from 'node:url';
import path from 'node:path';
import sharp from 'sharp';
import { db, closeDb } from '../src/lib/server/db';
import { issueViewingLink } from '../src/lib/server/client-access';
import { hashPassword } from '../src/lib/server/password';
import { keys, deletePrefix } from '../src/lib/server/storage';

const RATE = { listing: 10, pick: 20, upload: 0.5 }; // per second
const CLIENTS = 10;
const GALLERY_FRAMES = 200;

const percentile = (sorted: number[], p: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)]! : NaN);
const round = (v: number, d = 1) => Math.round(v * 10 ** d) / 10 ** d;

/** RSS in MB of this stack's process whose command line matches, found through its environment. */
function rssOf(pattern: string): number | null {
  const r = spawnSync('pgrep', ['-f', pattern], { encoding: 'utf8' });
  const mine = `DATABASE_URL=${process.env.DATABASE_URL}`;
  for (const pid of r.stdout.split('\n').filter(Boolean)) {
    try {
      if (!readFileSync(`/proc/${pid}/environ`, 'utf8').split('\0').includes(mine)) continue;
      const status = readFileSync(`/proc/${pid}/status`, 'utf8');
      const kb = Number(status.match(/VmRSS:\s+(\d+)/)?.[1]);
      const cmd = readFileSync(`/proc/${pid}/cmdline`, 'utf8');
      if (cmd.includes('node') && !cmd.includes('.bin/tsx')) return round(kb / 1024, 0);
    } catch { /* gone */ }
  }
  return null;
}

class Session {
  cookie = '';
  constructor(private origin: string) {}
  async call(method: string, p: string, body?: unknown, form?: Record<string, string>) {
    const headers: Record<string, string> = { Origin: this.origin };
    if (this.cookie) headers.Cookie = this.cookie;
    let payload: string | undefined;
    if (body !== undefined) { headers['Content-Type'] = 'application/json'; payload = JSON.stringify(body); }
    if (form) { headers['Content-Type'] = 'application/x-www-form-urlencoded'; payload = new URLSearchParams(form).toString(); }
    const res = await fetch(this.origin + p, { method, headers, body: payload, redirect: 'manual' });
    const set = res.headers.getSetCookie().map((c) => c.split(';')[0]!).filter((c) => !c.endsWith('='));
    if (set.length) this.cookie = [...new Map([...this.cookie.split('; ').filter(Boolean), ...set].map((c) => [c.split('=')[0], c])).values()].join('; ');
    const text = await res.text();
    return { status: res.status, text };
  }
}

export async function benchSoak(minutes = 3, origin = process.env.PUBLIC_ORIGIN ?? 'http://127.0.0.1:4331') {
  if (!['127.0.0.1', 'localhost'].includes(new URL(origin).hostname)) throw new Error('soak runs against this machine only');
  const durationMs = Math.min(10, Math.max(0.5, minutes)) * 60_000;
  const tag = randomUUID().slice(0, 8);
  const [studio] = await db()('studios').insert({ name: `Soak Studio ${tag}` }).returning('id');
  const email = `soak-${tag}@example.test`;
  const [user] = await db()('users').insert({ email, name: 'Soak owner', password_hash: await hashPassword('soak-password-1') }).returning('id');
  await db()('memberships').insert({ studio_id: studio.id, user_id: user.id, role: 'owner' });
  const shootRow = async (i: number, stage: string) => {
    const [client] = await db()('clients').insert({ studio_id: studio.id, name: `Soak client ${i}`, email: `soak-${tag}-${i}@example.test` }).returning('id');
    const [shoot] = await db()('shoots').insert({ studio_id: studio.id, client_id: client.id, title: `Soak ${i}`, shot_on: new Date(), stage, allowance: 50, extra_price_minor: 1000, currency: 'EUR', proof_expires_at: new Date(Date.now() + 86400_000) }).returning('id');
    return shoot.id as string;
  };
  // Gallery shoots: frames and variants as rows (the listing never fetches images).
  const galleries: { shootId: string; frameIds: string[]; session: Session }[] = [];
  for (let i = 0; i < CLIENTS; i++) {
    const shootId = await shootRow(i, 'proofing');
    const frames = Array.from({ length: GALLERY_FRAMES }, (_, n) => ({ studio_id: studio.id, shoot_id: shootId, object_key: keys.original(studio.id, shootId, 'jpg'), original_name: `S_${n}.jpg`, bytes: 1, state: 'ready' }));
    const frameIds = (await db()('frames').insert(frames).returning('id')).map((r) => r.id as string);
    await db()('frame_variants').insert(frameIds.flatMap((id, n) => ['thumb', 'proof'].map((kind) => ({ studio_id: studio.id, frame_id: id, kind, object_key: keys.variant(studio.id, shootId, `${tag}${i}${kind}${n}`.padEnd(64, '0'), 'jpg'), width: 10, height: 10, bytes: 1 }))));
    const session = new Session(origin);
    await session.call('GET', `/g/${await issueViewingLink(shootId, studio.id)}`);
    galleries.push({ shootId, frameIds, session });
  }
  const uploadShoot = await shootRow(99, 'draft');
  const owner = new Session(origin);
  const signin = await owner.call('POST', '/signin', undefined, { email, password: 'soak-password-1' });
  if (signin.status !== 303) throw new Error(`soak sign-in answered ${signin.status}`);
  const photo = await sharp({ create: { width: 1200, height: 800, channels: 3, background: '#8a7060' } }).jpeg().toBuffer();

  const lat: Record<string, number[]> = { listing: [], pick: [], upload: [] };
  const errors: Record<string, number> = { listing: 0, pick: 0, upload: 0 };
  const picked = new Map<string, boolean>();
  let uploads = 0;
  const memStart = { app: rssOf('server/entry.mjs'), worker: rssOf('src/worker.ts') };
  const started = Date.now();
  const inflight = new Set<Promise<void>>();
  const timed = (kind: string, job: () => Promise<boolean>) => {
    const t = performance.now();
    const p = job()
      .then((ok) => { lat[kind]!.push(performance.now() - t); if (!ok) errors[kind]!++; })
      .catch(() => { errors[kind]!++; })
      .finally(() => inflight.delete(p));
    inflight.add(p);
  };
  let n = 0;
  const tickMs = 50;
  await new Promise<void>((resolve) => {
    const timer = setInterval(() => {
      if (Date.now() - started >= durationMs) { clearInterval(timer); resolve(); return; }
      n++;
      const every = (perSecond: number) => n % Math.max(1, Math.round(1000 / tickMs / perSecond)) === 0;
      if (every(RATE.listing)) {
        const g = galleries[n % CLIENTS]!;
        timed('listing', async () => (await g.session.call('GET', `/api/gallery/${g.shootId}/frames`)).status === 200);
      }
      if (every(RATE.pick)) {
        const g = galleries[(n * 7) % CLIENTS]!;
        const frameId = g.frameIds[(n * 13) % g.frameIds.length]!;
        const on = !picked.get(frameId);
        picked.set(frameId, on);
        timed('pick', async () => {
          const r = await g.session.call(on ? 'PUT' : 'DELETE', `/api/gallery/${g.shootId}/picks/${frameId}`, on ? {} : undefined);
          return r.status < 500;
        });
      }
      if (every(RATE.upload)) {
        uploads++;
        timed('upload', async () => {
          const name = `soak-${uploads}.jpg`;
          const sign = await owner.call('POST', `/api/shoots/${uploadShoot}/uploads/sign`, { method: 'PUT', key: name, fileName: name, size: photo.length, contentType: 'image/jpeg' });
          if (sign.status !== 200) return false;
          const { url, key } = JSON.parse(sign.text);
          // Each upload differs by a byte in a comment, so none is refused as a duplicate.
          const bytes = Buffer.concat([photo.subarray(0, 2), Buffer.from([0xff, 0xfe, 0x00, 0x08]), Buffer.from(String(uploads).padStart(6, '0')), photo.subarray(2)]);
          const put = await fetch(url, { method: 'PUT', body: bytes, headers: { 'Content-Type': 'image/jpeg' } });
          if (!put.ok) return false;
          const reg = await owner.call('POST', `/api/shoots/${uploadShoot}/frames`, { key, name, size: bytes.length });
          return reg.status === 201 || reg.status === 200;
        });
      }
    }, tickMs);
  });
  await Promise.all(inflight);
  const elapsed = (Date.now() - started) / 1000;
  // Every registered frame is processed by the worker.
  let ready = 0;
  let total = 0;
  for (let i = 0; i < 120; i++) {
    const rows = await db()('frames').where({ shoot_id: uploadShoot }).select('state');
    total = rows.length;
    ready = rows.filter((r) => r.state === 'ready').length;
    if (ready === total) break;
    await new Promise((r) => setTimeout(r, 1000));
  }
  const memEnd = { app: rssOf('server/entry.mjs'), worker: rssOf('src/worker.ts') };

  const row = (kind: string) => {
    const s = [...lat[kind]!].sort((a, b) => a - b);
    return `| ${kind} | ${s.length} | ${round(s.length / elapsed)} | ${round(percentile(s, 50))} | ${round(percentile(s, 95))} | ${round(percentile(s, 99))} | ${errors[kind]} |`;
  };
  const table = [
    `Soak for ${round(elapsed / 60)} min at listing ${RATE.listing}/s (${GALLERY_FRAMES}-frame galleries), picks ${RATE.pick}/s, uploads ${RATE.upload}/s (1200×800 JPEGs, processed by the worker):`,
    '',
    '| kind | requests | per s | p50 ms | p95 ms | p99 ms | errors |',
    '| --- | ---: | ---: | ---: | ---: | ---: | ---: |',
    row('listing'), row('pick'), row('upload'),
    '',
    `Frames registered ${total}, processed ready ${ready}. Memory (RSS MB) app ${memStart.app} → ${memEnd.app}, worker ${memStart.worker} → ${memEnd.worker}.`,
  ].join('\n');

  await deletePrefix(`studios/${studio.id}/`).catch(() => null);
  await db()('studios').where({ id: studio.id }).delete().catch(async () => {
    await db()('frames').where({ studio_id: studio.id }).delete();
    await db()('studios').where({ id: studio.id }).delete();
  });
  await db()('users').where({ id: user.id }).delete();
  return { table, errors: errors.listing! + errors.pick! + errors.upload!, memStart, memEnd };
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href;
if (invokedDirectly) {
  const r = await benchSoak(Number(process.argv[2] ?? 3));
  console.log(r.table);
  await closeDb();
  process.exit(0);
}
