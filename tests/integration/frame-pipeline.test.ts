/**
 * The frame pipeline end to end: files written with ExifTool, sent through the real sign API and
 * presigned PUTs, registered, built by the real worker, and then checked against outside tools:
 * ExifTool (`exiftool -j -n`) for every stored camera setting, ImageMagick's `identify` and
 * `compare` for the variants' size, colour space and upright orientation. Then the worker's
 * robustness: a worker killed mid-frame is taken over, and two workers never build a frame twice.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync, execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { syntheticPortrait } from '../../scripts/lib/synthetic-portrait';
import { makeStudio, makeShoot, memberAgent, type TestStudio } from '../support/factories';
import type { Agent } from '../support/http';
import { ARTIFACTS } from '../support/env';
import { db } from '../../src/lib/server/db';
import { getObjectBuffer, keys, listKeys } from '../../src/lib/server/storage';

const root = path.resolve(import.meta.dirname, '../..');
// The Debian binaries are the reference, whatever else is on the PATH.
const EXIFTOOL = '/usr/bin/exiftool';
const IDENTIFY = '/usr/bin/identify';
const CONVERT = '/usr/bin/convert';
const COMPARE = '/usr/bin/compare';

const scratch = mkdtempSync(path.join(os.tmpdir(), 'fillcard-pipeline-'));
let fileNo = 0;
function scratchFile(data: Buffer, ext: string) {
  const file = path.join(scratch, `f${++fileNo}.${ext}`);
  writeFileSync(file, data);
  return file;
}

function exiftoolRead(data: Buffer): Record<string, unknown> {
  return JSON.parse(execFileSync(EXIFTOOL, ['-j', '-n', scratchFile(data, 'jpg')], { encoding: 'utf8' }))[0];
}

function identify(data: Buffer, format: string): string {
  return execFileSync(IDENTIFY, ['-format', format, scratchFile(data, 'jpg')], { encoding: 'utf8' }).trim();
}

/** ImageMagick's normalised RMSE between an image and the original turned upright and scaled to its size. */
function rmseAgainstOriginal(original: Buffer, variant: Buffer, width: number, height: number, autoOrient = true): number {
  const reference = path.join(scratch, `ref${++fileNo}.png`);
  execFileSync(CONVERT, [scratchFile(original, 'jpg'), ...(autoOrient ? ['-auto-orient'] : []), '-resize', `${width}x${height}!`, reference]);
  // compare exits 1 when the images differ at all; the metric is on stderr either way.
  const r = spawnSync(COMPARE, ['-metric', 'RMSE', reference, scratchFile(variant, 'jpg'), 'null:'], { encoding: 'utf8' });
  const m = /\(([\d.e-]+)\)/.exec(r.stderr);
  if (!m) throw new Error(`compare said: ${r.stderr}`);
  return Number(m[1]);
}

interface Signed {
  url: string;
  key: string;
  headers?: Record<string, string>;
}

async function upload(agent: Agent, shootId: string, name: string, bytes: Buffer) {
  const s = await agent.postJson(`/api/shoots/${shootId}/uploads/sign`, { method: 'PUT', key: '', fileName: name, size: bytes.length });
  const signed = (await s.json()) as Signed;
  expect(s.status).toBe(200);
  const put = await fetch(signed.url, { method: 'PUT', headers: signed.headers, body: new Uint8Array(bytes) });
  await put.arrayBuffer();
  expect(put.status).toBe(200);
  const r = await agent.postJson(`/api/shoots/${shootId}/frames`, { key: signed.key, name, size: bytes.length });
  const body = (await r.json()) as { id: string; error?: string };
  expect(r.status, body.error).toBe(201);
  return body.id;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function waitUntil<T>(what: string, read: () => Promise<T>, done: (v: T) => boolean, timeoutMs: number): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await read();
    if (done(v)) return v;
    if (Date.now() > until) throw new Error(`${what}: not done after ${timeoutMs / 1000} s (last: ${JSON.stringify(v)})`);
    await sleep(250);
  }
}

const frameRow = (id: string) => db()('frames').where({ id }).first();
const allSettled = (ids: string[], timeoutMs: number) =>
  waitUntil(
    'frames settle',
    () => db()('frames').whereIn('id', ids).select('id', 'state', 'attempts', 'error'),
    (rows) => rows.length === ids.length && rows.every((r) => r.state === 'ready' || r.state === 'failed'),
    timeoutMs,
  );

/** The values ExifTool wrote, by tag; numbers become raw values (`TAG#=`). Invented maker names only. */
const EXIF_CASES: { name: string; orientation: number; ev: number; tags: Record<string, string | number> }[] = [
  {
    name: 'upright.jpg',
    orientation: 1,
    // EV at ISO 100 for f/5.6, 1/250 s: 12.937 (APEX: EV = log2(N²/t); Exif standard CIPA DC-008 annex,
    // and the table in Wikipedia's "Exposure value").
    ev: 12.937,
    tags: {
      Make: 'Northlight Optics', Model: 'NL-7 Studio', LensModel: 'Northlight 85mm F1.8', ExposureTime: '1/250', FNumber: 5.6, ISO: 100,
      FocalLength: 85, FocalLengthIn35mmFormat: 85, 'EXIF:Flash': 1, DateTimeOriginal: '2026:03:14 10:15:30', OffsetTimeOriginal: '+02:00', Orientation: 1,
    },
  },
  {
    name: 'upside-down.jpg',
    orientation: 3,
    ev: 13.966, // f/8, 1/250 s (same table)
    tags: {
      Make: 'Kestrel Imaging', Model: 'K2', LensModel: 'Kestrel 50mm', ExposureTime: '1/250', FNumber: 8, ISO: 200, FocalLength: 50,
      FocalLengthIn35mmFormat: 75, 'EXIF:Flash': 16, ExposureCompensation: -0.7, DateTimeOriginal: '2026:03:14 11:00:05', OffsetTimeOriginal: '-05:00', Orientation: 3,
    },
  },
  {
    name: 'turned-right.jpg',
    orientation: 6,
    ev: 8.878, // f/2.8, 1/60 s (same table)
    tags: {
      Make: 'Northlight Optics', Model: 'NL-7 Studio', LensModel: 'Northlight 35mm F2', ExposureTime: '1/60', FNumber: 2.8, ISO: 400, FocalLength: 35,
      FocalLengthIn35mmFormat: 52, 'EXIF:Flash': 0, DateTimeOriginal: '2026:03:14 12:30:00', OffsetTimeOriginal: '+05:30', Orientation: 6,
    },
  },
  {
    name: 'turned-left.jpg',
    orientation: 8,
    ev: 11.937, // f/5.6, 1/125 s (same table)
    tags: {
      Make: 'Kestrel Imaging', Model: 'K2', LensModel: 'Kestrel 105mm Macro', ExposureTime: '1/125', FNumber: 5.6, ISO: 100, FocalLength: 105,
      FocalLengthIn35mmFormat: 105, 'EXIF:Flash': 9, DateTimeOriginal: '2026:03:14 13:45:59', OffsetTimeOriginal: '+00:00', Orientation: 8,
    },
  },
];

const RATIO: Record<string, [number, number]> = { crop_4x5: [4, 5], crop_1x1: [1, 1], crop_9x16: [9, 16] };

describe('frame pipeline', () => {
  let studio: TestStudio;
  let owner: Agent;
  let shootId: string;
  const built: { case: (typeof EXIF_CASES)[number]; bytes: Buffer; id: string }[] = [];

  beforeAll(async () => {
    studio = await makeStudio('Pipeline');
    owner = await memberAgent(studio.owner.email);
    shootId = (await makeShoot(studio.studioId, { stage: 'draft' })).shoot.id;
    for (const [i, c] of EXIF_CASES.entries()) {
      const bytes = await syntheticPortrait({ width: 1500, height: 1000, seed: 600 + i, exif: c.tags });
      built.push({ case: c, bytes, id: await upload(owner, shootId, c.name, bytes) });
    }
    await allSettled(built.map((b) => b.id), 120_000);
  }, 180_000);

  afterAll(() => rmSync(scratch, { recursive: true, force: true }));

  it('stores every camera setting as ExifTool reads it from the file (ExifTool is the reference)', async () => {
    for (const b of built) {
      const f = await frameRow(b.id);
      expect(f.state, b.case.name).toBe('ready');
      const ref = exiftoolRead(b.bytes);
      // The files really carry what was written, as ExifTool reads it back.
      expect(ref.Orientation).toBe(b.case.orientation);
      expect(f.exposure_time_s).toBeCloseTo(ref.ExposureTime as number, 9);
      expect(f.f_number).toBe(ref.FNumber);
      expect(f.iso).toBe(ref.ISO);
      expect(f.focal_length_mm).toBe(ref.FocalLength);
      expect(f.focal_length_35mm).toBe(ref.FocalLengthIn35mmFormat);
      // Exif Flash (0x9209): bit 0 says whether the flash fired.
      expect(f.flash_fired).toBe(((ref.Flash as number) & 1) === 1);
      expect(f.exposure_bias_ev ?? 0).toBeCloseTo((ref.ExposureCompensation as number | undefined) ?? 0, 2);
      expect(f.lens).toBe(ref.LensModel);
      expect(f.camera_make).toBe(ref.Make);
      expect(f.camera_model).toBe(ref.Model);
      expect(f.orientation).toBe(ref.Orientation);
      expect(f.taken_at_offset).toBe(ref.OffsetTimeOriginal);
      // DateTimeOriginal is the camera's wall clock; with OffsetTimeOriginal it names one instant.
      const [d, t] = String(ref.DateTimeOriginal).split(' ');
      const [sign, hh, mm] = /^([+-])(\d\d):(\d\d)$/.exec(String(ref.OffsetTimeOriginal))!.slice(1);
      const offsetMs = (sign === '-' ? -1 : 1) * (Number(hh) * 60 + Number(mm)) * 60_000;
      expect(new Date(f.taken_at).getTime()).toBe(Date.parse(`${d!.replaceAll(':', '-')}T${t}Z`) - offsetMs);
    }
  });

  it('computes EV at ISO 100 within 0.05 of the APEX table (Exif CIPA DC-008; Wikipedia "Exposure value")', async () => {
    for (const b of built) {
      const f = await frameRow(b.id);
      expect(Math.abs(f.ev100 - b.case.ev), b.case.name).toBeLessThanOrEqual(0.05);
    }
    const flashPortrait = await frameRow(built[0]!.id);
    expect(flashPortrait.ev100).toBeGreaterThan(12.89);
    expect(flashPortrait.ev100).toBeLessThan(12.99);
  });

  it('builds upright sRGB variants of the right size, checked with ImageMagick identify and compare', async () => {
    for (const b of built) {
      const f = await frameRow(b.id);
      const turned = b.case.orientation >= 5;
      expect([f.width, f.height]).toEqual(turned ? [1000, 1500] : [1500, 1000]);
      const variants = await db()('frame_variants').where({ frame_id: b.id }).orderBy('kind');
      expect(variants.map((v) => v.kind).sort()).toEqual(['crop_1x1', 'crop_4x5', 'crop_9x16', 'proof', 'thumb']);
      for (const v of variants) {
        const data = await getObjectBuffer(v.object_key);
        const [w, h] = identify(data, '%w %h').split(' ').map(Number) as [number, number];
        expect([w, h], `${b.case.name} ${v.kind}`).toEqual([v.width, v.height]);
        expect(identify(data, '%[colorspace]')).toBe('sRGB');
        // No orientation tag is left for a viewer to apply a second time.
        expect(['Undefined', 'TopLeft']).toContain(identify(data, '%[orientation]'));
        if (v.kind === 'thumb' || v.kind === 'proof') {
          const edge = v.kind === 'thumb' ? 480 : 1500; // the proof's 2048 edge is larger than this original
          expect(Math.max(w, h)).toBe(edge);
          expect(h > w).toBe(turned);
        } else {
          const [rw, rh] = RATIO[v.kind]!;
          // The ratio is exact to one pixel on one side.
          expect(Math.min(Math.abs(w - (h * rw) / rh), Math.abs(h - (w * rh) / rw)), `${b.case.name} ${v.kind} ${w}×${h}`).toBeLessThanOrEqual(1);
        }
        if (v.kind === 'thumb') {
          // Upright: the thumbnail (which carries the watermark) is close to the original turned by
          // ImageMagick's -auto-orient…
          const upright = rmseAgainstOriginal(b.bytes, data, w, h);
          expect(upright).toBeLessThan(0.1);
          // …and, for the half turn, clearly further from the unturned picture.
          if (b.case.orientation === 3) expect(rmseAgainstOriginal(b.bytes, data, w, h, false)).toBeGreaterThan(upright + 0.04);
        }
      }
    }
  });

  it('stores variants under content-addressed keys: the same bytes give the same key', async () => {
    const b = built[0]!;
    const before = await db()('frame_variants').where({ frame_id: b.id }).select('kind', 'object_key');
    for (const v of before) {
      const data = await getObjectBuffer(v.object_key);
      const hash = createHash('sha256').update(data).digest('hex');
      expect(v.object_key).toBe(keys.variant(studio.studioId, shootId, hash, 'jpg'));
    }
    // Rebuilding the crops at the same focus point makes the same bytes, so the same keys.
    const f = await frameRow(b.id);
    const res = await owner.postJson(`/api/frames/${b.id}`, { focus: { x: f.focus_x, y: f.focus_y } }, 'PATCH');
    expect(res.status).toBe(200);
    await waitUntil('crops rebuilt', () => frameRow(b.id), (r) => r.crops_pending === false, 60_000);
    const after = await db()('frame_variants').where({ frame_id: b.id }).select('kind', 'object_key');
    expect(new Map(after.map((v) => [v.kind, v.object_key]))).toEqual(new Map(before.map((v) => [v.kind, v.object_key])));
    // A new focus point gives new crops; the old crop objects leave storage with them.
    const moved = await owner.postJson(`/api/frames/${b.id}`, { focus: { x: 0.05, y: 0.5 } }, 'PATCH');
    expect(moved.status).toBe(200);
    await waitUntil('crops rebuilt', () => frameRow(b.id), (r) => r.crops_pending === false, 60_000);
    const third = await db()('frame_variants').where({ frame_id: b.id }).select('kind', 'object_key');
    const oldCrop = before.find((v) => v.kind === 'crop_4x5')!.object_key;
    expect(third.find((v) => v.kind === 'crop_4x5')!.object_key).not.toBe(oldCrop);
    const stored = new Set(await listKeys(`${keys.shootPrefix(studio.studioId, shootId)}variants/`));
    expect(stored.has(oldCrop)).toBe(false);
    const referenced = await db()('frame_variants as v').join('frames as f', 'f.id', 'v.frame_id').where('f.shoot_id', shootId).pluck('v.object_key');
    expect(stored).toEqual(new Set(referenced));
  });
});

/** Workers this file starts, so it stops exactly those and no other process. */
const started: { pid: number; log: string }[] = [];

async function startWorker(tag: string) {
  mkdirSync(ARTIFACTS, { recursive: true });
  const log = path.join(ARTIFACTS, `worker-${tag}-${Date.now()}.log`);
  const out = openSync(log, 'a');
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/worker.ts'], { cwd: root, env: process.env, detached: true, stdio: ['ignore', out, out] });
  child.unref();
  const w = { pid: child.pid!, log };
  started.push(w);
  await waitUntil(`worker ${tag} ready`, async () => readFileSync(log, 'utf8'), (text) => text.includes('worker ready'), 60_000);
  return w;
}

const isAlive = (pid: number) => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};

async function stopWorker(w: { pid: number }, signal: NodeJS.Signals = 'SIGTERM') {
  if (isAlive(w.pid)) process.kill(w.pid, signal);
  await waitUntil(`worker ${w.pid} gone`, async () => isAlive(w.pid), (alive) => !alive, 30_000);
}

/** Frames this worker says it claimed, in order. */
function claimsIn(log: string, pid: number): string[] {
  const re = new RegExp(`worker ${pid} claimed frame ([0-9a-f-]{36})`, 'g');
  return [...readFileSync(log, 'utf8').matchAll(re)].map((m) => m[1]!);
}

describe('frame workers', () => {
  let owner: Agent;
  let shootId: string;
  let studioId: string;

  beforeAll(async () => {
    const studio = await makeStudio('Workers');
    studioId = studio.studioId;
    owner = await memberAgent(studio.owner.email);
    shootId = (await makeShoot(studio.studioId, { stage: 'draft' })).shoot.id;
  });

  afterAll(async () => {
    for (const w of started) await stopWorker(w);
    // Later tests need a worker on the queue: check one still builds frames, else leave one running.
    const probe = await upload(owner, shootId, 'probe.jpg', await syntheticPortrait({ width: 400, height: 300, seed: 99 }));
    const served = await waitUntil('probe', () => frameRow(probe), (r) => r.state === 'ready', 45_000).then(() => true, () => false);
    if (!served) {
      const out = openSync(path.join(ARTIFACTS, 'worker-restarted.log'), 'a');
      spawn(process.execPath, ['--import', 'tsx', 'src/worker.ts'], { cwd: root, env: process.env, detached: true, stdio: ['ignore', out, out] }).unref();
      await waitUntil('probe after restart', () => frameRow(probe), (r) => r.state === 'ready', 120_000);
    }
  }, 240_000);

  it('a worker killed in the middle of a frame: another takes the frame over and builds exactly one set of variants', async () => {
    let victim: string | null = null;
    const batches: string[] = [];
    for (let round = 0; round < 4 && !victim; round++) {
      const doomed = await startWorker(`doomed-${round}`);
      const ids: string[] = [];
      for (let i = 0; i < 6; i++) {
        const bytes = await syntheticPortrait({ width: 4500, height: 3000, seed: 7000 + round * 10 + i });
        ids.push(await upload(owner, shootId, `crash-${round}-${i}.jpg`, bytes));
      }
      batches.push(...ids);
      // Kill it the moment one of its claimed frames is still being built.
      const until = Date.now() + 90_000;
      while (!victim && Date.now() < until) {
        const mine = claimsIn(doomed.log, doomed.pid).filter((id) => ids.includes(id));
        const building = mine.length
          ? await db()('frames').whereIn('id', mine).where({ state: 'processing' }).pluck('id')
          : [];
        if (building.length) {
          process.kill(doomed.pid, 'SIGKILL');
          await stopWorker(doomed);
          const still = await db()('frames').whereIn('id', building).where({ state: 'processing' }).pluck('id');
          victim = still[0] ?? null;
          break;
        }
        await sleep(40);
      }
      if (isAlive(doomed.pid)) await stopWorker(doomed);
    }
    expect(victim, 'a frame was being built when its worker died').not.toBeNull();

    await startWorker('rescuer');
    // The dead worker's claim lapses after three minutes; then the frame is built again.
    const done = await waitUntil('victim ready', () => frameRow(victim!), (r) => r.state === 'ready', 330_000);
    expect(done.attempts).toBeGreaterThanOrEqual(2);
    expect(await db()('frame_variants').where({ frame_id: victim }).select('kind').then((r) => r.map((v) => v.kind).sort())).toEqual([
      'crop_1x1', 'crop_4x5', 'crop_9x16', 'proof', 'thumb',
    ]);
    const rows = await allSettled(batches, 120_000);
    expect(rows.every((r) => r.state === 'ready')).toBe(true);
    // Nothing half-written is left: storage holds exactly the variants the frames point to.
    const stored = new Set(await listKeys(`${keys.shootPrefix(studioId, shootId)}variants/`));
    const referenced = await db()('frame_variants').whereIn('frame_id', batches).pluck('object_key');
    expect(stored).toEqual(new Set(referenced));
  }, 480_000);

  it('two workers side by side build each frame exactly once', async () => {
    const second = await startWorker('second');
    const ids: string[] = [];
    for (let i = 0; i < 10; i++) {
      ids.push(await upload(owner, shootId, `pair-${String(i).padStart(2, '0')}.jpg`, await syntheticPortrait({ width: 1600, height: 1067, seed: 8100 + i })));
    }
    const rows = await allSettled(ids, 180_000);
    for (const r of rows) {
      expect(r.state, r.error ?? '').toBe('ready');
      expect(r.attempts).toBe(1);
    }
    const counts = await db()('frame_variants').whereIn('frame_id', ids).groupBy('frame_id').select('frame_id', db().raw('count(*)::int AS n'));
    expect(counts).toHaveLength(10);
    expect(counts.every((c) => c.n === 5)).toBe(true);
    // The second worker's claims are each for a different frame.
    const claims = claimsIn(second.log, second.pid).filter((id) => ids.includes(id));
    expect(new Set(claims).size).toBe(claims.length);
    await stopWorker(second);
  }, 240_000);
});
