/**
 * "Download all" under load: a ZIP of 200 finals of 10 MB each, streamed by the app from the object
 * store to a client on the same machine.
 *  - peak resident memory of the app process while it streams, above its idle level, read from
 *    /proc/<pid>/status (target: under 150 MB);
 *  - the same while a client reads slowly (8 MB/s for 10 s), the case where an app that ignores
 *    the socket's backpressure would hold the rest of the archive in memory;
 *  - throughput as a ratio of a plain sequential read of the same objects from the object store in
 *    the same run (target: at least 0.7).
 *
 * Needs a running stack (`npm test -- --serve`, any slot) and its env (`. .data/test-<n>/env`);
 * talks to 127.0.0.1 only. The 200 objects are generated once (random bytes framed as a JPEG:
 * stored entries do not care what is inside) and kept under bench/ in the bucket for later runs;
 * `--clean` removes them afterwards. The rows it makes (a studio, a shoot, its finals) are deleted.
 *
 * Plain and ZIP passes alternate for two rounds (the figures are means), so other work on the machine
 * weighs on both alike; CPU seconds of the app and of the object store are printed with them.
 *
 * Run: `npx tsx bench/zip.ts [finals] [megabytes] [rounds] [--clean]`. Prints a markdown table.
 */
import { randomBytes } from 'node:crypto';
import http from 'node:http';
import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { promisify } from 'node:util';
import { db, closeDb } from '../src/lib/server/db';
import { getObjectStream, listKeys, putObject, deletePrefix } from '../src/lib/server/storage';
import { makeStudio, makeShoot, memberAgent } from '../tests/support/factories';
import { APP } from '../tests/support/env';

const run = promisify(execFile);
const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const OBJECT_PREFIX = 'bench/zip-finals/';
/** No phase may take longer than this; a stuck store or app ends the run with an error. */
const PHASE_LIMIT_MS = 10 * 60_000;

export interface ZipBenchResult {
  finals: number;
  megabytesEach: number;
  totalMb: number;
  appPid: number;
  idleRssMb: number;
  peakRssMb: number;
  peakAboveIdleMb: number;
  plainSeconds: number;
  plainMbPerS: number;
  zipSeconds: number;
  zipMbPerS: number;
  zipBytes: number;
  /** CPU seconds the app spent on the ZIP, and the store on each pass. */
  appCpuSeconds: number;
  storeCpuPlain: number | null;
  storeCpuZip: number | null;
  ratio: number;
  rounds: number;
  roundRatios: number[];
  /** A client reading at 8 MB/s for 10 s: what the app held meanwhile. */
  slowClient: { idleMb: number; peakAboveIdleMb: number; readMb: number };
  loadAverage: number;
}

/** The app process of this stack: an entry.mjs of the stack's build whose environment has our origin. */
async function findAppPid(): Promise<number> {
  const outDir = process.env.FILLCARD_OUT_DIR ?? path.join(repoRoot, 'dist');
  const pattern = `${path.relative(repoRoot, outDir) || 'dist'}/server/entry.mjs`;
  const { stdout } = await run('pgrep', ['-f', pattern]).catch(() => ({ stdout: '' }));
  const pids = stdout.split('\n').map(Number).filter((n) => n > 0 && n !== process.pid);
  const ours = pids.filter((pid) => {
    try {
      return readFileSync(`/proc/${pid}/environ`, 'utf8').split('\0').includes(`PUBLIC_ORIGIN=${APP}`);
    } catch {
      return false;
    }
  });
  if (ours.length !== 1) throw new Error(`expected one app process for ${APP} (${pattern}), found ${ours.length}`);
  return ours[0]!;
}

/** User + system CPU seconds a process has used so far (/proc/<pid>/stat, in clock ticks of 1/100 s). */
function cpuSeconds(pid: number): number {
  const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ');
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

function rssMb(pid: number): number {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const kb = Number(/VmRSS:\s+(\d+) kB/.exec(status)?.[1] ?? NaN);
  return kb / 1024;
}

/** Random bytes between a JPEG start and end marker: what a stored ZIP entry sees of a photo. */
function jpegLike(bytes: number): Buffer {
  const body = randomBytes(bytes);
  body.set([0xff, 0xd8, 0xff, 0xe0], 0);
  body.set([0xff, 0xd9], bytes - 2);
  return body;
}

async function ensureObjects(count: number, bytes: number): Promise<string[]> {
  const wanted = Array.from({ length: count }, (_, i) => `${OBJECT_PREFIX}${bytes}/final-${String(i).padStart(3, '0')}.jpg`);
  const have = new Set(await listKeys(`${OBJECT_PREFIX}${bytes}/`));
  const missing = wanted.filter((k) => !have.has(k));
  const started = Date.now();
  for (let i = 0; i < missing.length; i += 4) {
    await Promise.all(missing.slice(i, i + 4).map((k) => putObject(k, jpegLike(bytes), 'image/jpeg')));
    if (Date.now() - started > PHASE_LIMIT_MS) throw new Error('generating the objects took too long');
  }
  return wanted;
}

async function withDeadline<T>(what: string, work: (signal: AbortSignal) => Promise<T>): Promise<T> {
  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(new Error(`${what} took longer than ${PHASE_LIMIT_MS / 60_000} minutes`)), PHASE_LIMIT_MS);
  try {
    return await work(controller.signal);
  } finally {
    clearTimeout(timer);
  }
}

/**
 * A client that reads the ZIP at a set pace (a phone on a slow line) for a while, then leaves:
 * the app must not buffer what it cannot send. Returns the app's peak RSS meanwhile.
 */
async function slowClientPeak(pid: number, url: string, cookie: string, bytesPerS: number, seconds: number): Promise<{ peakMb: number; readMb: number }> {
  let peak = rssMb(pid);
  let read = 0;
  await new Promise<void>((resolve, reject) => {
    const t0 = Date.now();
    const req = http.get(url, { headers: { cookie, origin: new URL(url).origin } }, (res) => {
      if (res.statusCode !== 200) return reject(new Error(`the ZIP answered ${res.statusCode}`));
      res.on('data', (chunk: Buffer) => {
        read += chunk.length;
        const ahead = read / bytesPerS - (Date.now() - t0) / 1000;
        if (ahead > 0) {
          res.pause();
          setTimeout(() => res.resume(), ahead * 1000);
        }
      });
    });
    req.on('error', () => resolve());
    const sampler = setInterval(() => {
      peak = Math.max(peak, rssMb(pid));
      if (Date.now() - t0 > seconds * 1000) {
        clearInterval(sampler);
        req.destroy();
        resolve();
      }
    }, 20);
  });
  return { peakMb: peak, readMb: read / 1048576 };
}

/** Reads every object once, one after another, as the app does, and throws the bytes away. */
async function plainRead(keysToRead: string[], signal: AbortSignal): Promise<{ seconds: number; bytes: number }> {
  const t0 = performance.now();
  let bytes = 0;
  for (const key of keysToRead) {
    signal.throwIfAborted();
    const { stream } = await getObjectStream(key);
    for await (const chunk of stream) bytes += (chunk as Buffer).length;
  }
  return { seconds: (performance.now() - t0) / 1000, bytes };
}

/** The object store stand-in of this stack, when it runs here (for its CPU time); null otherwise. */
async function findStorePid(): Promise<number | null> {
  const port = new URL(process.env.S3_ENDPOINT ?? 'http://127.0.0.1:9390').port;
  const { stdout } = await run('pgrep', ['-f', `object-store.ts ${port} `]).catch(() => ({ stdout: '' }));
  const pids = stdout.split('\n').map(Number).filter((n) => n > 0);
  // tsx runs the stand-in in a child node process: the busiest of them is the store itself.
  return pids.length ? pids.reduce((a, b) => (cpuSeconds(b) > cpuSeconds(a) ? b : a)) : null;
}

export async function benchZip(opts: { finals?: number; megabytes?: number; rounds?: number; clean?: boolean } = {}): Promise<ZipBenchResult> {
  const count = opts.finals ?? 200;
  const rounds = Math.max(1, opts.rounds ?? 2);
  const megabytes = opts.megabytes ?? 10;
  const bytesEach = megabytes * 1024 * 1024;
  const appPid = await findAppPid();
  const objectKeys = await ensureObjects(count, bytesEach);

  // A delivered shoot whose finals are those objects, and its owner signed in.
  const studio = await makeStudio('Bench');
  const { shoot } = await makeShoot(studio.studioId, { stage: 'delivered' });
  await db()('shoots').where({ id: shoot.id }).update({ download_until: new Date(Date.now() + 86_400_000) });
  const frames = objectKeys.map((_key, i) => ({
    studio_id: studio.studioId, shoot_id: shoot.id, object_key: `bench-frame/${shoot.id}/${i}.jpg`,
    original_name: `bench-${String(i).padStart(3, '0')}.jpg`, bytes: bytesEach, state: 'ready', width: 4000, height: 5000,
  }));
  const frameIds: string[] = (await db()('frames').insert(frames).returning('id')).map((r: { id: string }) => r.id);
  const finalIds: string[] = (await db()('finals').insert(frameIds.map((frameId, i) => ({
    studio_id: studio.studioId, shoot_id: shoot.id, frame_id: frameId, object_key: `bench-final/${shoot.id}/${i}.jpg`,
    original_name: `bench-${i}-edit.jpg`, bytes: bytesEach, width: 4000, height: 5000, state: 'ready',
  }))).returning('id')).map((r: { id: string }) => r.id);
  await db()('final_variants').insert(finalIds.map((finalId, i) => ({
    studio_id: studio.studioId, final_id: finalId, kind: 'full', object_key: objectKeys[i], width: 4000, height: 5000, bytes: bytesEach,
  })));
  const owner = await memberAgent(studio.owner.email);

  try {
    // Idle: the app after a request, sampled for a second.
    await (await owner.get(`/api/shoots/${shoot.id}/finals`)).arrayBuffer();
    let idle = 0;
    for (let i = 0; i < 20; i++) {
      idle = Math.max(idle, rssMb(appPid));
      await new Promise((r) => setTimeout(r, 50));
    }

    const storePid = await findStorePid();
    const storeCpu = () => (storePid ? cpuSeconds(storePid) : NaN);
    let peak = idle;
    const plainRuns: { seconds: number; bytes: number }[] = [];
    const zipRuns: { seconds: number; bytes: number }[] = [];
    let storeCpuPlain = 0;
    let storeCpuZip = 0;
    let appCpuSeconds = 0;
    // Plain and ZIP passes alternate, so other work on the machine weighs on both alike.
    for (let round = 0; round < rounds; round++) {
      let store0 = storeCpu();
      plainRuns.push(await withDeadline('the plain read', (signal) => plainRead(objectKeys, signal)));
      storeCpuPlain += storeCpu() - store0;

      store0 = storeCpu();
      const app0 = cpuSeconds(appPid);
      const sampler = setInterval(() => {
        try {
          peak = Math.max(peak, rssMb(appPid));
        } catch {
          /* the process may be gone; the download then fails below */
        }
      }, 20);
      zipRuns.push(await withDeadline('the ZIP download', async (signal) => {
        const t0 = performance.now();
        const res = await owner.fetch(`/api/shoots/${shoot.id}/finals/zip`, { signal });
        if (res.status !== 200) throw new Error(`the ZIP answered ${res.status}: ${await res.text()}`);
        let bytes = 0;
        const reader = res.body!.getReader();
        for (;;) {
          const { done, value } = await reader.read();
          if (done) break;
          bytes += value.length;
        }
        return { seconds: (performance.now() - t0) / 1000, bytes };
      }).finally(() => clearInterval(sampler)));
      peak = Math.max(peak, rssMb(appPid));
      appCpuSeconds += cpuSeconds(appPid) - app0;
      storeCpuZip += storeCpu() - store0;
    }
    // A slow reader last: 8 MB/s for 10 s.
    const slowIdle = rssMb(appPid);
    const cookie = [...owner.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
    const slow = await slowClientPeak(appPid, `${APP}/api/shoots/${shoot.id}/finals/zip`, cookie, 8 * 1048576, 10);
    const sum = (runs: { seconds: number }[]) => runs.reduce((n, r) => n + r.seconds, 0);
    const plain = { seconds: sum(plainRuns) / rounds, bytes: plainRuns[0]!.bytes };
    const zip = { seconds: sum(zipRuns) / rounds, bytes: zipRuns[0]!.bytes };
    storeCpuPlain /= rounds;
    storeCpuZip /= rounds;
    appCpuSeconds /= rounds;

    if (zip.bytes < plain.bytes) throw new Error(`the ZIP held ${zip.bytes} bytes, less than the ${plain.bytes} of its files`);
    const totalMb = plain.bytes / 1048576;
    return {
      finals: count,
      megabytesEach: megabytes,
      totalMb,
      appPid,
      idleRssMb: idle,
      peakRssMb: peak,
      peakAboveIdleMb: peak - idle,
      plainSeconds: plain.seconds,
      plainMbPerS: totalMb / plain.seconds,
      zipSeconds: zip.seconds,
      zipMbPerS: totalMb / zip.seconds,
      zipBytes: zip.bytes,
      appCpuSeconds,
      storeCpuPlain: Number.isNaN(storeCpuPlain) ? null : storeCpuPlain,
      storeCpuZip: Number.isNaN(storeCpuZip) ? null : storeCpuZip,
      slowClient: { idleMb: slowIdle, peakAboveIdleMb: slow.peakMb - slowIdle, readMb: slow.readMb },
      rounds,
      roundRatios: plainRuns.map((p, i) => p.seconds / zipRuns[i]!.seconds),
      ratio: plain.seconds / zip.seconds,
      loadAverage: os.loadavg()[0]!,
    };
  } finally {
    await db()('studios').where({ id: studio.studioId }).delete();
    if (opts.clean) await deletePrefix(OBJECT_PREFIX);
  }
}

export function zipTable(r: ZipBenchResult): string {
  const f = (n: number, d = 1) => n.toFixed(d);
  const yes = (ok: boolean) => (ok ? 'yes' : '**no**');
  return [
    `ZIP of ${r.finals} finals × ${r.megabytesEach} MB (${f(r.totalMb, 0)} MB; archive ${f(r.zipBytes / 1048576, 1)} MB), app pid ${r.appPid}, ${os.cpus().length} cores, load average ${f(r.loadAverage, 2)}`,
    '',
    '| measure | value | target | met |',
    '| --- | --- | --- | --- |',
    `| app RSS idle | ${f(r.idleRssMb)} MB | | |`,
    `| app RSS peak while streaming | ${f(r.peakRssMb)} MB | | |`,
    `| peak above idle | ${f(r.peakAboveIdleMb)} MB | < 150 MB | ${yes(r.peakAboveIdleMb < 150)} |`,
    `| plain sequential read from the store (mean of ${r.rounds}) | ${f(r.plainSeconds, 2)} s, ${f(r.plainMbPerS, 0)} MB/s | | |`,
    `| ZIP streamed through the app (mean of ${r.rounds}) | ${f(r.zipSeconds, 2)} s, ${f(r.zipMbPerS, 0)} MB/s | | |`,
    `| ZIP throughput ÷ plain read | ${f(r.ratio, 2)} (rounds: ${r.roundRatios.map((x) => f(x, 2)).join(', ')}) | ≥ 0.7 | ${yes(r.ratio >= 0.7)} |`,
    `| peak above idle, client reading at 8 MB/s for 10 s (${f(r.slowClient.readMb, 0)} MB read) | ${f(r.slowClient.peakAboveIdleMb)} MB | < 150 MB | ${yes(r.slowClient.peakAboveIdleMb < 150)} |`,
    `| app CPU for the ZIP | ${f(r.appCpuSeconds, 2)} s | | |`,
    `| object store CPU, plain read / ZIP | ${r.storeCpuPlain === null ? 'n/a' : `${f(r.storeCpuPlain, 2)} s / ${f(r.storeCpuZip!, 2)} s`} | | |`,
  ].join('\n');
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href;
if (invokedDirectly) {
  const args = process.argv.slice(2);
  const numbers = args.filter((a) => /^\d+$/.test(a)).map(Number);
  try {
    const result = await benchZip({ finals: numbers[0], megabytes: numbers[1], rounds: numbers[2], clean: args.includes('--clean') });
    console.log(zipTable(result));
  } finally {
    await closeDb();
  }
}
