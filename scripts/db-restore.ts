/**
 * `npm run db:restore <file>`: restores a dump made by db:backup into DATABASE_URL's database,
 * replacing what is there (pg_restore --clean --if-exists), in one transaction so a failure changes nothing.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { config } from '../src/lib/server/config';
import { pgTool } from './lib/pg-tools';

const file = process.argv[2];
if (!file || !existsSync(file)) {
  console.error('Usage: npm run db:restore -- <backup file>');
  process.exit(2);
}
const r = spawnSync(pgTool('pg_restore'), ['--clean', '--if-exists', '--no-owner', '--no-privileges', '--single-transaction', `--dbname=${config().DATABASE_URL}`, file], { stdio: 'inherit' });
if (r.status !== 0) {
  console.error('pg_restore failed; the database was left as it was.');
  process.exit(1);
}
console.log(`[fillcard] database restored from ${file}`);
