import type { Knex } from 'knex';

/**
 * Set when the owner moves a frame's focus point and cleared when its crops have been rebuilt for
 * that point, so the frames board knows when to show the new crops (a rebuild may produce the same
 * bytes, hence the same URL, so the URLs alone cannot tell).
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE frames ADD COLUMN crops_pending boolean NOT NULL DEFAULT false');
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE frames DROP COLUMN crops_pending');
}
