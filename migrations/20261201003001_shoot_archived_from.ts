import type { Knex } from 'knex';

/**
 * The stage a shoot was archived from, so bringing it back returns it to where it was (a delivered
 * shoot reopens its finals, a shoot in proofing its picking). Shoots archived before this column
 * existed take the stage their audit line recorded.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE shoots ADD COLUMN archived_from text
      CHECK (archived_from IS NULL OR archived_from IN ('draft', 'proofing', 'picks_in', 'retouching', 'delivered'));
    UPDATE shoots s SET archived_from = a.from_stage
      FROM (
        SELECT DISTINCT ON (subject_id) subject_id, details->>'fromStage' AS from_stage
        FROM audit_log WHERE action = 'shoot.archived' AND subject_type = 'shoot'
        ORDER BY subject_id, created_at DESC
      ) a
      WHERE s.id = a.subject_id AND s.stage = 'archived'
        AND a.from_stage IN ('draft', 'proofing', 'picks_in', 'retouching', 'delivered');
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE shoots DROP COLUMN archived_from');
}
