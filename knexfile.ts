import type { Knex } from 'knex';
import { config } from './src/lib/server/config';

const settings: Knex.Config = {
  client: 'pg',
  connection: config().DATABASE_URL,
  pool: { min: 0, max: 10 },
  migrations: { directory: './migrations', extension: 'ts', loadExtensions: ['.ts'] },
  seeds: { directory: './seeds', extension: 'ts', loadExtensions: ['.ts'] },
};

export default settings;
