import type { Knex } from 'knex';

/**
 * How many ready finals the client has been told about. After a partial hand-off the rest arrive
 * later; the desk shows how many are new since the last e-mail and the owner tells the client in
 * one message. Shoots handed off before this column existed count every ready final as told.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE shoots ADD COLUMN announced_finals integer NOT NULL DEFAULT 0 CHECK (announced_finals >= 0);
    UPDATE shoots s SET announced_finals = (
      SELECT count(*) FROM picks k
        JOIN finals fi ON fi.frame_id = k.frame_id AND fi.superseded_at IS NULL AND fi.state = 'ready'
       WHERE k.shoot_id = s.id
    )
    WHERE s.stage = 'delivered' OR (s.stage = 'archived' AND s.archived_from = 'delivered');
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE shoots DROP COLUMN announced_finals');
}
