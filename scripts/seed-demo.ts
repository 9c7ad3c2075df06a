/** Loads the demo studio into an empty database (rows, then frames rendered by Fillcard itself). */
import knexFactory from 'knex';
import settings from '../knexfile';
import { seed } from '../seeds/01_demo_studio';
import { seedDemoFrames } from './lib/demo-frames';

const knex = knexFactory(settings);
try {
  const studioId = await seed(knex);
  if (!(await knex('frames').where({ studio_id: studioId }).first('id'))) await seedDemoFrames(knex, studioId);
  console.log('[fillcard] demo studio loaded');
} finally {
  await knex.destroy();
}
process.exit(0);
