/**
 * Stops and starts parts of the running test stack, for tests of faults: a dependency going away
 * mid-work and coming back. Restarted processes are detached and log to the artifacts folder.
 */
import { spawn, spawnSync } from 'node:child_process';
import { openSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';
import { root, waitForPort, testPorts, testWorkDir, reachableDataDir } from '../../scripts/lib/services';
import { ARTIFACTS } from './env';

const work = process.env.FILLCARD_TEST_WORK ?? testWorkDir;
const isRoot = process.getuid?.() === 0;

/** Processes of THIS test stack matching the pattern: its env carries this stack's database URL. */
function pids(pattern: string): number[] {
  const r = spawnSync('pgrep', ['-f', pattern], { encoding: 'utf8' });
  const mine = `DATABASE_URL=${process.env.DATABASE_URL}`;
  return r.stdout.split('\n').filter(Boolean).map(Number).filter((p) => {
    if (p === process.pid) return false;
    try {
      return readFileSync(`/proc/${p}/environ`, 'utf8').split('\0').includes(mine);
    } catch {
      return false;
    }
  });
}

export async function stopProcesses(pattern: string, signal: NodeJS.Signals = 'SIGTERM') {
  for (const pid of pids(pattern)) {
    try { process.kill(pid, signal); } catch { /* already gone */ }
  }
  const until = Date.now() + 10_000;
  while (pids(pattern).length && Date.now() < until) await sleep(100);
}

function detached(cmd: string, args: string[], logName: string) {
  const out = openSync(path.join(ARTIFACTS, logName), 'a');
  const child = spawn(cmd, args, { cwd: root, env: { ...process.env, MALLOC_ARENA_MAX: '2' }, detached: true, stdio: ['ignore', out, out] });
  child.unref();
}

export const mailCatcher = {
  pattern: `maildev.js --ip 127.0.0.1 --web-ip 127.0.0.1 --smtp ${testPorts.smtp}`,
  stop() { return stopProcesses(this.pattern); },
  async start() {
    detached(process.execPath, [path.join(root, 'node_modules/maildev/dist/bin/maildev.js'), '--ip', '127.0.0.1', '--web-ip', '127.0.0.1', '--smtp', String(testPorts.smtp), '--web', String(testPorts.mailWeb), '--silent'], 'maildev.log');
    await waitForPort(testPorts.smtp, 'MailDev SMTP');
    await waitForPort(testPorts.mailWeb, 'MailDev web');
  },
};

export const worker = {
  pattern: 'src/worker.ts',
  stop(signal: NodeJS.Signals = 'SIGTERM') { return stopProcesses(this.pattern, signal); },
  async start() {
    detached(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'src/worker.ts')], 'worker.log');
    await sleep(1500);
  },
  count() { return pids('/src/worker.ts').length; },
};

export const paymentStandIn = {
  pattern: 'stand-ins/payments.ts',
  stop() { return stopProcesses(this.pattern); },
  async start() {
    detached(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'scripts/stand-ins/payments.ts')], 'payments.log');
    await waitForPort(testPorts.payments, 'The payment stand-in');
  },
};

export const objectStore = {
  pattern: 'stand-ins/object-store.ts',
  stop() { return stopProcesses(this.pattern); },
  async start() {
    detached(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'scripts/stand-ins/object-store.ts'), String(testPorts.objectStore), path.join(work, 'objects'), 'fillcard', process.env.PUBLIC_ORIGIN!], 'object-store.log');
    await waitForPort(testPorts.objectStore, 'The object store');
  },
};

const pgCtl = () => {
  const r = spawnSync('sh', ['-c', 'ls -d /usr/lib/postgresql/*/bin | sort -V | tail -1'], { encoding: 'utf8' });
  return path.join(r.stdout.trim(), 'pg_ctl');
};

function asPostgres(args: string[]) {
  return isRoot ? spawnSync('runuser', ['-u', 'postgres', '--', pgCtl(), ...args], { encoding: 'utf8' }) : spawnSync(pgCtl(), args, { encoding: 'utf8' });
}

export const database = {
  stop() {
    const r = asPostgres(['-D', reachableDataDir(path.join(work, 'postgres')), '-m', 'fast', 'stop']);
    if (r.status !== 0) throw new Error(`pg_ctl stop failed: ${r.stderr}`);
  },
  start() {
    const settings = `-c listen_addresses=127.0.0.1 -p ${testPorts.postgres} -k /tmp/fillcard-pg-${testPorts.postgres} -c fsync=off -c synchronous_commit=off -c full_page_writes=off`;
    const r = asPostgres(['-D', reachableDataDir(path.join(work, 'postgres')), '-l', path.join(reachableDataDir(path.join(work, 'postgres')), 'server.log'), '-o', settings, '-w', 'start']);
    if (r.status !== 0) throw new Error(`pg_ctl start failed: ${r.stderr}`);
  },
};
