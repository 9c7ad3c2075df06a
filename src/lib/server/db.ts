import knexFactory, { type Knex } from 'knex';
import pg from 'pg';
import { config } from './config';

// PostgreSQL returns bigint (int8) as text by default; our bigints (byte counts) fit in a JS number.
pg.types.setTypeParser(20, (v) => Number(v));
// numeric columns (f-number, focal length) are small decimals: read them as numbers.
pg.types.setTypeParser(1700, (v) => Number(v));

let knexInstance: Knex | undefined;
let poolInstance: pg.Pool | undefined;

/** The query builder every server module uses. */
export function db(): Knex {
  knexInstance ??= knexFactory({
    client: 'pg',
    connection: config().DATABASE_URL,
    pool: { min: 0, max: 10, acquireTimeoutMillis: 10_000 } as Knex.PoolConfig,
    acquireConnectionTimeout: 10_000,
  });
  return knexInstance;
}

/** A plain pg pool for Lucia's adapter, which speaks node-postgres directly. */
export function pool(): pg.Pool {
  if (!poolInstance) {
    poolInstance = new pg.Pool({ connectionString: config().DATABASE_URL, max: 5, connectionTimeoutMillis: 10_000 });
    // An idle connection dropped by the server (a restart, a failover) must not take the process down.
    poolInstance.on('error', (err) => console.error('[fillcard] idle database connection lost:', err.message));
  }
  return poolInstance;
}

export async function closeDb() {
  await Promise.all([knexInstance?.destroy(), poolInstance?.end()]);
  knexInstance = undefined;
  poolInstance = undefined;
}
