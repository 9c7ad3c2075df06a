import type { Knex } from 'knex';

/**
 * A counter on each shoot that moves whenever any of its frames or their variants change (added,
 * processed, hidden, renamed, removed). The app keeps recent gallery listings in memory under this
 * number, so a 500-frame listing is read from the database once per change rather than once per
 * request, and no process ever serves a listing older than the database. Statement-level triggers
 * bump each touched shoot once per statement.
 */
const EVENTS = [
  ['insert', 'NEW'],
  ['update', 'NEW'],
  ['delete', 'OLD'],
] as const;

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE shoots ADD COLUMN frames_version bigint NOT NULL DEFAULT 0;

    CREATE FUNCTION fillcard_frames_changed() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      UPDATE shoots SET frames_version = frames_version + 1
       WHERE id IN (SELECT DISTINCT shoot_id FROM changed_rows);
      RETURN NULL;
    END $$;

    CREATE FUNCTION fillcard_frame_variants_changed() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      UPDATE shoots SET frames_version = frames_version + 1
       WHERE id IN (SELECT DISTINCT f.shoot_id FROM frames f JOIN changed_rows c ON c.frame_id = f.id);
      RETURN NULL;
    END $$;
  `);
  for (const [event, side] of EVENTS) {
    await knex.raw(`
      CREATE TRIGGER frames_${event}_version AFTER ${event.toUpperCase()} ON frames
        REFERENCING ${side} TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION fillcard_frames_changed();
      CREATE TRIGGER frame_variants_${event}_version AFTER ${event.toUpperCase()} ON frame_variants
        REFERENCING ${side} TABLE AS changed_rows FOR EACH STATEMENT EXECUTE FUNCTION fillcard_frame_variants_changed();
    `);
  }
}

export async function down(knex: Knex): Promise<void> {
  for (const [event] of EVENTS) {
    await knex.raw(`DROP TRIGGER IF EXISTS frames_${event}_version ON frames; DROP TRIGGER IF EXISTS frame_variants_${event}_version ON frame_variants;`);
  }
  await knex.raw(`
    DROP FUNCTION IF EXISTS fillcard_frames_changed();
    DROP FUNCTION IF EXISTS fillcard_frame_variants_changed();
    ALTER TABLE shoots DROP COLUMN frames_version;
  `);
}
