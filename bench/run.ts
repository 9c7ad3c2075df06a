/**
 * `npm run bench`: every benchmark in one run. The image pipeline runs in this process; the others
 * need the app, so a test stack of their own (slot 9) is started, used and stopped. Results are
 * printed and written to bench/results/latest.md with the machine they ran on.
 *
 *   npm run bench                 # all, soak 3 minutes
 *   npm run bench -- --soak 10    # the full ten-minute soak
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';

const root = path.resolve(import.meta.dirname, '..');
const slot = '9';
const envFile = path.join(root, '.data', `test-${slot}`, 'env');
const soakMinutes = Number(process.argv[process.argv.indexOf('--soak') + 1] || 3) || 3;
const tsx = path.join(root, 'node_modules/.bin/tsx');
const sections: string[] = [];

function machine() {
  return `${os.cpus().length} cores, ${Math.round(os.totalmem() / 2 ** 30)} GiB, Node ${process.version}, load average at start ${os.loadavg().map((l) => l.toFixed(1)).join(' ')}`;
}

function runBench(title: string, file: string, args: string[], env: NodeJS.ProcessEnv) {
  console.log(`\n## ${title}`);
  const r = spawnSync(tsx, [path.join(root, 'bench', file), ...args], { cwd: root, env: { ...process.env, ...env }, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  const out = r.stdout.split('\n').filter((l) => !/Warning|AWS SDK|versions published|require node|continue receiving|security updates|a\.co\/|trace-warnings/.test(l)).join('\n').trim();
  console.log(out || r.stderr);
  sections.push(`## ${title}\n\n\`npx tsx bench/${file} ${args.join(' ')}\`\n\n${r.status === 0 ? out : `failed (exit ${r.status}):\n\n\`\`\`\n${r.stderr.slice(-2000)}\n\`\`\``}`);
}

function readEnv(): NodeJS.ProcessEnv {
  return Object.fromEntries(readFileSync(envFile, 'utf8').split('\n').filter(Boolean).map((l) => {
    const m = l.match(/^export (\w+)='(.*)'$/)!;
    return [m[1], m[2]];
  }));
}

const started = new Date();
const header = `# Benchmark results\n\nRun ${started.toISOString()} on ${machine()}.\n`;
runBench('Frame pipeline', 'pipeline.ts', [], {});

rmSync(envFile, { force: true });
console.log('\n[bench] starting a test stack for the app benchmarks…');
const stack = spawn(tsx, [path.join(root, 'scripts/test.ts'), '--serve'], { cwd: root, env: { ...process.env, FILLCARD_TEST_SLOT: slot }, stdio: 'ignore', detached: true });
try {
  for (let i = 0; i < 600 && !existsSync(envFile); i++) await sleep(500);
  if (!existsSync(envFile)) throw new Error('the test stack did not start');
  const env = readEnv();
  runBench('Picks and gallery listing under load', 'picks-load.ts', [], env);
  if (existsSync(path.join(root, 'bench/zip.ts'))) runBench('Finals ZIP streaming', 'zip.ts', [], env);
  runBench('Soak', 'soak.ts', [String(soakMinutes)], env);
} finally {
  try { process.kill(-stack.pid!, 'SIGTERM'); } catch { /* already gone */ }
  await sleep(3000);
}
mkdirSync(path.join(root, 'bench/results'), { recursive: true });
writeFileSync(path.join(root, 'bench/results/latest.md'), `${header}\n${sections.join('\n\n')}\n`);
console.log('\n[bench] written to bench/results/latest.md');
process.exit(0);
