/**
 * `npm test`: unit and integration tests (Vitest) and end-to-end tests (Playwright in Debian's
 * Chromium), against a throwaway PostgreSQL cluster, the object store, the mail catcher and the
 * payment stand-in, all on 127.0.0.1 ports of their own.
 */
import { rmSync, mkdirSync, existsSync } from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import {
  root, log, startPostgres, Children, testPorts as ports, serviceEnv, startObjectStore, startMailCatcher,
  startPaymentStandIn, runMigrations, buildApp, startApp, startWorker, waitForPort, testSlot, testWorkDir, reachableDataDir, stopStackLeftovers,
} from './lib/services';

const args = process.argv.slice(2);
const only = args.find((a) => a === '--unit' || a === '--e2e');
const passthrough = args.filter((a) => !a.startsWith('--'));
const work = testWorkDir;
const artifacts = path.join(root, 'tests', testSlot === 0 ? '.artifacts' : `.artifacts-${testSlot}`);
const children = new Children();
let postgres: Awaited<ReturnType<typeof startPostgres>> | undefined;

function run(cmd: string, cmdArgs: string[], env: NodeJS.ProcessEnv) {
  log(`$ ${path.basename(cmd)} ${cmdArgs.join(' ')}`);
  return spawnSync(cmd, cmdArgs, { cwd: root, env: { ...process.env, ...env }, stdio: 'inherit' }).status ?? 1;
}

async function main(): Promise<number> {
  // A stale cluster from an interrupted run is stopped and thrown away.
  const cluster = reachableDataDir(path.join(work, 'postgres'));
  if (existsSync(path.join(cluster, 'postmaster.pid'))) {
    spawnSync('sh', ['-c', `runuser -u postgres -- /usr/lib/postgresql/*/bin/pg_ctl -D ${cluster} -m immediate stop || pg_ctl -D ${cluster} -m immediate stop`], { stdio: 'ignore' });
  }
  rmSync(cluster, { recursive: true, force: true });
  rmSync(work, { recursive: true, force: true });
  rmSync(artifacts, { recursive: true, force: true });
  mkdirSync(work, { recursive: true });
  mkdirSync(artifacts, { recursive: true });

  postgres = await startPostgres({ dataDir: path.join(work, 'postgres'), port: ports.postgres, database: 'fillcard_test', fast: true });
  const env: NodeJS.ProcessEnv = {
    ...serviceEnv(ports, postgres.url), NODE_ENV: 'test', FILLCARD_TEST_WORK: work, FILLCARD_ARTIFACTS: artifacts,
    FILLCARD_TEST_SLOT: String(testSlot),
    // Every test signs in from 127.0.0.1; the per-account limit is what the tests exercise.
    SIGN_IN_LIMIT_PER_ADDRESS: '100000', FILLCARD_OUT_DIR: testSlot === 0 ? path.join(root, 'dist') : path.join(work, 'dist'),
  };
  Object.assign(process.env, env);
  await Promise.all([
    startObjectStore(children, ports.objectStore, path.join(work, 'objects'), [env.PUBLIC_ORIGIN!], path.join(artifacts, 'object-store.log')),
    startMailCatcher(children, ports.smtp, ports.mailWeb, path.join(artifacts, 'maildev.log')),
    startPaymentStandIn(children, env, path.join(artifacts, 'payments.log')),
  ]);
  runMigrations(env);
  buildApp(env);
  startWorker(children, env, path.join(artifacts, 'worker.log'));
  startApp(children, env, path.join(artifacts, 'app.log'));
  await waitForPort(ports.app, 'The app');

  if (args.includes('--serve')) {
    // Keeps the test stack up for debugging and screenshots; Ctrl-C stops it.
    log(`serving the test stack: ${env.PUBLIC_ORIGIN} (mail ${env.MAILDEV_URL}); env written to ${work}/env`);
    const { writeFileSync } = await import('node:fs');
    writeFileSync(path.join(work, 'env'), Object.entries(env).map(([k, v]) => `export ${k}='${v}'`).join('\n') + '\n');
    await new Promise(() => {});
  }
  let failed = 0;
  // Types first: a type error is a bug the other tests may not reach.
  if (!only && passthrough.length === 0) failed += run(path.join(root, 'node_modules/.bin/astro'), ['check', '--minimumSeverity', 'error'], env) ? 1 : 0;
  if (only !== '--e2e') failed += run(path.join(root, 'node_modules/.bin/vitest'), ['run', ...passthrough], env) ? 1 : 0;
  if (only !== '--unit') failed += run(path.join(root, 'node_modules/.bin/playwright'), ['test', ...passthrough], env) ? 1 : 0;
  return failed;
}

async function shutdown(code: number) {
  await children.stopAll();
  if (postgres) stopStackLeftovers(postgres.url);
  postgres?.stop();
  process.exit(code);
}
process.on('SIGINT', () => shutdown(130));
process.on('SIGTERM', () => shutdown(143));

main()
  .then((failed) => {
    log(failed ? 'some tests failed (logs in tests/.artifacts/)' : 'all tests passed');
    return shutdown(failed ? 1 : 0);
  })
  .catch(async (err) => {
    console.error(err);
    await shutdown(1);
  });
