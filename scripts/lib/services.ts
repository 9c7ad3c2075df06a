/**
 * Starts and stops the local stand-ins Fillcard needs: PostgreSQL (Debian's binaries), the object
 * store, the mail catcher and the payment stand-in. Shared by `npm start` and `npm test`.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, chownSync, chmodSync, openSync, readFileSync } from 'node:fs';
import { setTimeout as sleep } from 'node:timers/promises';
import path from 'node:path';
import os from 'node:os';
import net from 'node:net';
import { createHash } from 'node:crypto';
import pg from 'pg';

export const root = path.resolve(import.meta.dirname, '../..');
const isRoot = process.getuid?.() === 0;

export function log(what: string) {
  console.log(`\x1b[2m[fillcard]\x1b[0m ${what}`);
}

function postgresBin(): string | null {
  const base = '/usr/lib/postgresql';
  if (!existsSync(base)) return null;
  const versions = readdirSync(base)
    .filter((v) => existsSync(path.join(base, v, 'bin', 'initdb')))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(base, versions[0], 'bin') : null;
}

/** Debian's PostgreSQL server binaries, installed with apt-get when missing and we are root. */
export function ensurePostgresInstalled(): string {
  let bin = postgresBin();
  if (bin) return bin;
  const command = 'apt-get update && apt-get install -y postgresql';
  if (!isRoot) {
    throw new Error(`PostgreSQL's server binaries are missing. Install them with:\n  sudo ${command}`);
  }
  log('PostgreSQL is missing: installing it with apt-get (a minute or two, once)…');
  const r = spawnSync('sh', ['-c', `DEBIAN_FRONTEND=noninteractive ${command}`], { stdio: 'inherit' });
  bin = postgresBin();
  if (r.status !== 0 || !bin) throw new Error(`Installing PostgreSQL failed. Run: ${command}`);
  return bin;
}

function asPostgresUser(bin: string, args: string[], opts: { quiet?: boolean } = {}) {
  const cmd = isRoot ? 'runuser' : bin;
  const full = isRoot ? ['-u', 'postgres', '--', bin, ...args] : args;
  return spawnSync(cmd, full, { stdio: opts.quiet ? 'pipe' : 'inherit', encoding: 'utf8' });
}

export interface PostgresHandle {
  url: string;
  stop(): void;
}

/** Creates (once) and starts a cluster in dataDir on 127.0.0.1:port, and the named database. */
export async function startPostgres(opts: {
  dataDir: string;
  port: number;
  database: string;
  fast?: boolean;
}): Promise<PostgresHandle> {
  const bin = ensurePostgresInstalled();
  opts = { ...opts, dataDir: reachableDataDir(opts.dataDir) };
  const initdb = path.join(bin, 'initdb');
  const pgCtl = path.join(bin, 'pg_ctl');
  const socketDir = path.join(os.tmpdir(), `fillcard-pg-${opts.port}`);
  mkdirSync(socketDir, { recursive: true });
  if (isRoot) chownPostgres(socketDir);

  if (!existsSync(path.join(opts.dataDir, 'PG_VERSION'))) {
    mkdirSync(opts.dataDir, { recursive: true });
    chmodSync(opts.dataDir, 0o700);
    if (isRoot) chownPostgres(opts.dataDir);
    log(`creating a PostgreSQL cluster in ${path.relative(root, opts.dataDir) || opts.dataDir}`);
    const r = asPostgresUser(initdb, ['-D', opts.dataDir, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8'], { quiet: true });
    if (r.status !== 0) throw new Error(`initdb failed:\n${r.stdout}\n${r.stderr}`);
  }

  const status = asPostgresUser(pgCtl, ['-D', opts.dataDir, 'status'], { quiet: true });
  if (status.status !== 0) {
    const settings = [`-c listen_addresses=127.0.0.1`, `-p ${opts.port}`, `-k ${socketDir}`];
    if (opts.fast) settings.push('-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off');
    const r = asPostgresUser(pgCtl, ['-D', opts.dataDir, '-l', path.join(opts.dataDir, 'server.log'), '-o', settings.join(' '), '-w', 'start'], { quiet: true });
    if (r.status !== 0) throw new Error(`PostgreSQL did not start (see ${opts.dataDir}/server.log):\n${r.stdout}${r.stderr}`);
  }

  const admin = new pg.Client({ host: '127.0.0.1', port: opts.port, user: 'postgres', database: 'postgres' });
  await admin.connect();
  const exists = await admin.query('SELECT 1 FROM pg_database WHERE datname = $1', [opts.database]);
  if (exists.rowCount === 0) await admin.query(`CREATE DATABASE "${opts.database}"`);
  await admin.end();

  return {
    url: `postgres://postgres@127.0.0.1:${opts.port}/${opts.database}`,
    stop() {
      asPostgresUser(pgCtl, ['-D', opts.dataDir, '-m', 'fast', 'stop'], { quiet: true });
    },
  };
}

/**
 * As root the server runs as the postgres OS user, which must be able to reach the data folder. A
 * checkout under a private home folder is out of its reach; then the cluster lives under /var/tmp.
 */
export function reachableDataDir(dataDir: string): string {
  if (!isRoot) return dataDir;
  const parent = path.dirname(dataDir);
  mkdirSync(parent, { recursive: true });
  const ok = spawnSync('runuser', ['-u', 'postgres', '--', 'test', '-x', parent]).status === 0;
  if (ok) return dataDir;
  const alt = path.join('/var/tmp', 'fillcard-postgres', createHash('sha256').update(dataDir).digest('hex').slice(0, 12));
  mkdirSync(path.dirname(alt), { recursive: true, mode: 0o755 });
  log(`the postgres user cannot reach ${parent}; keeping the cluster in ${alt}`);
  return alt;
}

function chownPostgres(dir: string) {
  const id = spawnSync('id', ['-u', 'postgres'], { encoding: 'utf8' });
  const gid = spawnSync('id', ['-g', 'postgres'], { encoding: 'utf8' });
  if (id.status !== 0) throw new Error('The postgres OS user is missing; reinstall the postgresql package.');
  chownSync(dir, Number(id.stdout.trim()), Number(gid.stdout.trim()));
}

export async function waitForPort(port: number, what: string, timeoutMs = 30_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const open = await new Promise<boolean>((resolve) => {
      const s = net.connect({ host: '127.0.0.1', port }, () => { s.end(); resolve(true); });
      s.on('error', () => resolve(false));
    });
    if (open) return;
    await sleep(150);
  }
  throw new Error(`${what} did not open 127.0.0.1:${port} within ${timeoutMs / 1000} s`);
}

export class Children {
  private list: { name: string; child: ChildProcess }[] = [];

  spawn(name: string, cmd: string, args: string[], opts: { env?: NodeJS.ProcessEnv; logFile?: string } = {}) {
    const out = opts.logFile ? openSync(opts.logFile, 'a') : 'inherit';
    const child = spawn(cmd, args, {
      cwd: root,
      env: { ...process.env, ...opts.env },
      stdio: ['ignore', out, out],
    });
    child.on('exit', (code, signal) => {
      if (!this.stopping && code !== 0) log(`${name} stopped (${signal ?? `exit ${code}`})`);
    });
    this.list.push({ name, child });
    return child;
  }

  stopping = false;

  async stopAll() {
    this.stopping = true;
    for (const { child } of [...this.list].reverse()) if (child.exitCode === null) child.kill('SIGTERM');
    const deadline = Date.now() + 5000;
    while (this.list.some((c) => c.child.exitCode === null && c.child.signalCode === null) && Date.now() < deadline) await sleep(50);
    for (const { child } of this.list) if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  }
}

export interface ServicePorts {
  postgres: number;
  objectStore: number;
  smtp: number;
  mailWeb: number;
  payments: number;
  app: number;
}

export const startPorts: ServicePorts = { postgres: 55432, objectStore: 9390, smtp: 1025, mailWeb: 1080, payments: 12111, app: 4321 };
/**
 * Test stacks are numbered (FILLCARD_TEST_SLOT, default 0) so several can run side by side, each
 * with its own ports, data folder and build folder.
 */
export const testSlot = Number(process.env.FILLCARD_TEST_SLOT ?? 0);
export const testPorts: ServicePorts = testSlot === 0
  ? { postgres: 55442, objectStore: 9391, smtp: 1026, mailWeb: 1081, payments: 12112, app: 4331 }
  : { postgres: 55450 + testSlot, objectStore: 9400 + testSlot, smtp: 1030 + testSlot, mailWeb: 1090 + testSlot, payments: 12120 + testSlot, app: 4340 + testSlot };
export const testWorkDir = path.join(root, '.data', testSlot === 0 ? 'test' : `test-${testSlot}`);
/** Where `astro build` writes: dist/ normally, a folder of its own for a numbered test stack. */
export const outDir = () => process.env.FILLCARD_OUT_DIR ?? path.join(root, 'dist');

const tsx = path.join(root, 'node_modules/.bin/tsx');

/** Environment the app, worker and tests use to reach the stand-ins. */
export function serviceEnv(ports: ServicePorts, databaseUrl: string): NodeJS.ProcessEnv {
  const origin = `http://127.0.0.1:${ports.app}`;
  return {
    DATABASE_URL: databaseUrl,
    PUBLIC_ORIGIN: origin,
    S3_ENDPOINT: `http://127.0.0.1:${ports.objectStore}`,
    S3_BUCKET: 'fillcard',
    SMTP_HOST: '127.0.0.1',
    SMTP_PORT: String(ports.smtp),
    MAILDEV_URL: `http://127.0.0.1:${ports.mailWeb}`,
    STRIPE_API_BASE: `http://127.0.0.1:${ports.payments}`,
    PAYMENTS_PORT: String(ports.payments),
    HOST: '127.0.0.1',
    PORT: String(ports.app),
    ASTRO_TELEMETRY_DISABLED: '1',
  };
}

export async function startObjectStore(children: Children, port: number, dir: string, origins: string[], logFile?: string) {
  mkdirSync(dir, { recursive: true });
  children.spawn('object store', tsx, [path.join(root, 'scripts/stand-ins/object-store.ts'), String(port), dir, 'fillcard', origins.join(',')], { logFile });
  await waitForPort(port, 'The object store');
}

export async function startMailCatcher(children: Children, smtp: number, web: number, logFile?: string) {
  children.spawn('mail catcher', process.execPath, [
    path.join(root, 'node_modules/maildev/dist/bin/maildev.js'),
    '--ip', '127.0.0.1', '--web-ip', '127.0.0.1', '--smtp', String(smtp), '--web', String(web), '--silent',
  ], { logFile });
  await waitForPort(smtp, 'MailDev SMTP');
  await waitForPort(web, 'MailDev web');
}

export async function startPaymentStandIn(children: Children, env: NodeJS.ProcessEnv, logFile?: string) {
  if (!existsSync(path.join(root, 'scripts/stand-ins/payments.ts'))) return log('payment stand-in not present yet: skipped');
  children.spawn('payment stand-in', tsx, [path.join(root, 'scripts/stand-ins/payments.ts')], { env, logFile });
  await waitForPort(Number(env.PAYMENTS_PORT), 'The payment stand-in');
}

export function runMigrations(env: NodeJS.ProcessEnv) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(root, 'node_modules/knex/bin/cli.js'), 'migrate:latest', '--knexfile', path.join(root, 'knexfile.ts')], {
    cwd: root, env: { ...process.env, ...env }, stdio: 'pipe', encoding: 'utf8',
  });
  if (r.status !== 0) throw new Error(`Migrations failed:\n${r.stdout}\n${r.stderr}`);
}

export function buildApp(env: NodeJS.ProcessEnv) {
  log('building the app (astro build)…');
  const r = spawnSync(path.join(root, 'node_modules/.bin/astro'), ['build'], {
    cwd: root, env: { ...process.env, ...env }, stdio: 'inherit',
  });
  if (r.status !== 0) throw new Error('astro build failed');
}

export function startApp(children: Children, env: NodeJS.ProcessEnv, logFile?: string) {
  return children.spawn('app', process.execPath, [path.join(env.FILLCARD_OUT_DIR ?? outDir(), 'server/entry.mjs')], { env, logFile });
}

/** Fewer malloc arenas keep libvips' many threads from fragmenting the worker's memory. */
export const WORKER_ENV = { MALLOC_ARENA_MAX: '2' };

export function startWorker(children: Children, env: NodeJS.ProcessEnv, logFile?: string) {
  return children.spawn('worker', tsx, [path.join(root, 'src/worker.ts')], { env: { ...env, ...WORKER_ENV }, logFile });
}

/**
 * Processes started for this stack outside the runner's own children (tests that stop and restart a
 * stand-in start detached copies): every process whose environment holds this stack's database URL.
 */
export function stopStackLeftovers(databaseUrl: string) {
  const mine = `DATABASE_URL=${databaseUrl}`;
  for (const entry of readdirSync('/proc')) {
    const pid = Number(entry);
    if (!pid || pid === process.pid || pid === process.ppid) continue;
    try {
      if (readFileSync(`/proc/${pid}/environ`, 'utf8').split('\0').includes(mine)) process.kill(pid, 'SIGTERM');
    } catch { /* gone, or not ours to read */ }
  }
}
