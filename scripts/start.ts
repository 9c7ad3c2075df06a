/**
 * `npm start`: everything Fillcard needs on one machine, in one terminal. Starts PostgreSQL and the
 * local stand-ins on 127.0.0.1, migrates, loads the demo studio into an empty database, builds if
 * needed, then serves the app and the worker. Ctrl-C stops it all; the data stays in .data/.
 */
import { existsSync, statSync, readdirSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import pg from 'pg';
import {
  root, log, startPostgres, Children, startPorts as ports, serviceEnv, startObjectStore, startMailCatcher,
  startPaymentStandIn, runMigrations, buildApp, startApp, startWorker, waitForPort,
} from './lib/services';
import { DEMO_SIGN_INS } from './lib/demo';

const dataDir = path.join(root, '.data');
mkdirSync(dataDir, { recursive: true });
const children = new Children();
let postgres: Awaited<ReturnType<typeof startPostgres>> | undefined;

async function main() {
  log('starting PostgreSQL…');
  postgres = await startPostgres({ dataDir: path.join(dataDir, 'postgres'), port: ports.postgres, database: 'fillcard' });
  const env = serviceEnv(ports, postgres.url);
  Object.assign(process.env, env);

  log('starting the object store, the mail catcher and the payment stand-in…');
  await Promise.all([
    startObjectStore(children, ports.objectStore, path.join(dataDir, 'objects'), [env.PUBLIC_ORIGIN!, 'http://localhost:' + ports.app], path.join(dataDir, 'object-store.log')),
    startMailCatcher(children, ports.smtp, ports.mailWeb, path.join(dataDir, 'maildev.log')),
    startPaymentStandIn(children, env, path.join(dataDir, 'payments.log')),
  ]);

  log('migrating the database…');
  runMigrations(env);

  if (await databaseIsEmpty(postgres.url)) {
    log('empty database: loading the demo studio (a minute: it renders its own photos)…');
    const r = spawnSync(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'scripts/seed-demo.ts')], { cwd: root, env: { ...process.env, ...env }, stdio: 'inherit' });
    if (r.status !== 0) throw new Error('Loading the demo studio failed (see above).');
  }

  if (needsBuild()) buildApp(env);
  startWorker(children, env);
  startApp(children, env);
  await waitForPort(ports.app, 'The app');

  const sign = DEMO_SIGN_INS.map((s) => `    ${s.role.padEnd(10)} ${s.email}  /  ${s.password}`).join('\n');
  console.log(`
  \x1b[1mFillcard is running\x1b[0m
    App:         ${env.PUBLIC_ORIGIN}
    Mail inbox:  ${env.MAILDEV_URL}   (every e-mail the app sends lands here)
    Payments:    ${env.STRIPE_API_BASE}   (test payment stand-in)

  Demo sign-ins:
${sign}

  Clients have no password: on a shoot's "Client & picks" tab, send the viewing link, then open
  the e-mail in the mail inbox above (the demo passcode is "harbour").

  Press Ctrl-C to stop. Data stays in .data/ for next time.
`);
}

async function databaseIsEmpty(url: string) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  const { rows } = await c.query('SELECT count(*)::int AS n FROM studios');
  await c.end();
  return rows[0].n === 0;
}

/** Builds when there is no build yet or a source file is newer than it. */
function needsBuild(): boolean {
  const entry = path.join(root, 'dist/server/entry.mjs');
  if (!existsSync(entry)) return true;
  const built = statSync(entry).mtimeMs;
  const newer = (dir: string): boolean =>
    readdirSync(dir, { withFileTypes: true }).some((d) => {
      const p = path.join(dir, d.name);
      return d.isDirectory() ? newer(p) : statSync(p).mtimeMs > built;
    });
  return newer(path.join(root, 'src')) || newer(path.join(root, 'public')) || statSync(path.join(root, 'astro.config.mjs')).mtimeMs > built;
}

let stopping = false;
async function shutdown(code = 0) {
  if (stopping) return;
  stopping = true;
  log('stopping…');
  await children.stopAll();
  postgres?.stop();
  process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

main().catch(async (err) => {
  console.error(`\n${(err as Error).message}\n`);
  await shutdown(1);
});
