import type { Knex } from 'knex';

/** File names compare their digits as numbers ("IMG_9" before "IMG_10"); ICU's numeric ordering does it. */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`CREATE COLLATION IF NOT EXISTS fillcard_natural (provider = icu, locale = 'und-u-kn-true')`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP COLLATION IF EXISTS fillcard_natural');
}
