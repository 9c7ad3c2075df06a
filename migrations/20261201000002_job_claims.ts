import type { Knex } from 'knex';

/** A worker claims a frame or final before processing it, so two workers never build the same one. */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE frames ADD COLUMN claimed_at timestamptz, ADD COLUMN attempts integer NOT NULL DEFAULT 0;
    ALTER TABLE finals ADD COLUMN claimed_at timestamptz, ADD COLUMN attempts integer NOT NULL DEFAULT 0;
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE frames DROP COLUMN claimed_at, DROP COLUMN attempts;
    ALTER TABLE finals DROP COLUMN claimed_at, DROP COLUMN attempts;
  `);
}
