/** A backup restored into a fresh cluster holds the same rows (pg_dump / pg_restore, the real tools). */
import { describe, it, expect, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, chmodSync } from 'node:fs';
import path from 'node:path';
import os from 'node:os';
import pg from 'pg';
import { startPostgres, root } from '../../scripts/lib/services';
import { makeStudio, makeShoot } from '../support/factories';

const tsx = path.join(root, 'node_modules/.bin/tsx');
const TABLES = ['studios', 'users', 'memberships', 'clients', 'shoots', 'frames', 'picks', 'orders', 'audit_log', 'mail_outbox'];

async function counts(url: string) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  const out: Record<string, number> = {};
  for (const t of TABLES) out[t] = (await c.query(`SELECT count(*)::int AS n FROM ${t}`)).rows[0].n;
  const sample = (await c.query('SELECT id, title, currency FROM shoots ORDER BY id')).rows;
  await c.end();
  return { out, sample };
}

describe('database backup and restore', () => {
  const dir = mkdtempSync(path.join(process.env.FILLCARD_TEST_WORK ?? os.tmpdir(), 'backup-'));
  chmodSync(dir, 0o755); // the cluster runs as the postgres OS user, which must reach it
  let fresh: Awaited<ReturnType<typeof startPostgres>> | undefined;
  afterAll(() => {
    fresh?.stop();
    rmSync(dir, { recursive: true, force: true });
  });

  it('restores into a fresh cluster and finds the same rows', async () => {
    const studio = await makeStudio('Backup');
    await makeShoot(studio.studioId, { currency: 'JPY' });
    const file = path.join(dir, 'fillcard.dump');
    const backup = spawnSync(tsx, [path.join(root, 'scripts/db-backup.ts'), file], { env: process.env, encoding: 'utf8' });
    expect(backup.status, backup.stderr).toBe(0);

    fresh = await startPostgres({ dataDir: path.join(dir, 'cluster'), port: 55499, database: 'restored', fast: true });
    const restore = spawnSync(tsx, [path.join(root, 'scripts/db-restore.ts'), file], { env: { ...process.env, DATABASE_URL: fresh.url }, encoding: 'utf8' });
    expect(restore.status, restore.stderr).toBe(0);

    const before = await counts(process.env.DATABASE_URL!);
    const after = await counts(fresh.url);
    expect(after.out).toEqual(before.out);
    expect(after.sample).toEqual(before.sample);
    expect(after.out.shoots).toBeGreaterThan(0);
  });
});
