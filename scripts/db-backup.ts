/**
 * `npm run db:backup [file]`: a consistent dump of the database (pg_dump custom format) to
 * backups/fillcard-<time>.dump, or the given file. Object storage is backed up separately (README).
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { config } from '../src/lib/server/config';
import { pgTool } from './lib/pg-tools';

const out = process.argv[2] ?? path.join('backups', `fillcard-${new Date().toISOString().replace(/[:.]/g, '-')}.dump`);
mkdirSync(path.dirname(path.resolve(out)), { recursive: true });
const r = spawnSync(pgTool('pg_dump'), ['--format=custom', '--no-owner', '--no-privileges', `--file=${out}`, config().DATABASE_URL], { stdio: 'inherit' });
if (r.status !== 0) {
  console.error('pg_dump failed; nothing was written.');
  process.exit(1);
}
console.log(`[fillcard] database saved to ${out}`);
