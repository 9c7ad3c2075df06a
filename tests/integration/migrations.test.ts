/**
 * Every migration can be undone: in a database of its own, the whole chain goes up, all the way
 * down (leaving no table of ours behind) and up again.
 */
import { describe, it, expect, afterAll } from 'vitest';
import knex, { type Knex } from 'knex';
import pg from 'pg';
import settings from '../../knexfile';
import { config } from '../../src/lib/server/config';

const NAME = `fillcard_migrations_${process.pid}`;

// The migration files, loaded through the test runner's own TypeScript handling.
const files = import.meta.glob<Knex.Migration>('../../migrations/*.ts');
const migrationSource: Knex.MigrationSource<string> = {
  getMigrations: async () => Object.keys(files).sort(),
  getMigrationName: (file) => file.split('/').pop()!,
  getMigration: (file) => files[file]!(),
};

async function admin(sql: string) {
  const c = new pg.Client({ connectionString: config().DATABASE_URL });
  await c.connect();
  try {
    await c.query(sql);
  } finally {
    await c.end();
  }
}

async function ourTables(k: Knex): Promise<string[]> {
  const { rows } = await k.raw(`SELECT tablename FROM pg_tables WHERE schemaname = 'public' AND tablename NOT LIKE 'knex_%' ORDER BY 1`);
  return rows.map((r: { tablename: string }) => r.tablename);
}

describe('migrations', () => {
  let k: Knex | undefined;
  afterAll(async () => {
    await k?.destroy();
    await admin(`DROP DATABASE IF EXISTS ${NAME}`);
  });

  it('go up, all the way down, and up again', async () => {
    await admin(`DROP DATABASE IF EXISTS ${NAME}`);
    await admin(`CREATE DATABASE ${NAME}`);
    const url = new URL(config().DATABASE_URL);
    url.pathname = `/${NAME}`;
    k = knex({ ...settings, connection: url.toString(), pool: { min: 0, max: 2 }, migrations: { migrationSource } });

    const [, applied] = await k.migrate.latest();
    expect(applied.length).toBeGreaterThan(0);
    const tables = await ourTables(k);
    expect(tables).toEqual(expect.arrayContaining(['studios', 'shoots', 'frames', 'picks', 'finals', 'orders']));

    const [, undone] = await k.migrate.rollback(undefined, true);
    expect(undone).toHaveLength(applied.length);
    expect(await ourTables(k)).toEqual([]);

    const [, again] = await k.migrate.latest();
    expect(again).toEqual(applied);
    expect(await ourTables(k)).toEqual(tables);
  });
});
