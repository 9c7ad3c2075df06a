import type { Knex } from 'knex';

/**
 * Finals delivery. A final waits under `pending_frame_id` while it is processed and only becomes the
 * pick's final (`frame_id`) once ready, so a replacement never leaves a pick without a final in the
 * meantime; one pending final per pick at most. Finals get small previews for the screens, and the
 * download log says which frame and which crop was fetched.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE finals ADD COLUMN pending_frame_id uuid REFERENCES frames(id) ON DELETE CASCADE;
    CREATE UNIQUE INDEX finals_pending_per_frame ON finals (pending_frame_id) WHERE superseded_at IS NULL AND pending_frame_id IS NOT NULL;
    CREATE INDEX finals_state_idx ON finals (state, created_at) WHERE superseded_at IS NULL;

    ALTER TABLE final_variants DROP CONSTRAINT final_variants_kind_check;
    ALTER TABLE final_variants ADD CONSTRAINT final_variants_kind_check CHECK (kind IN (
      'full', 'crop_4x5', 'crop_1x1', 'crop_9x16', 'print_8x10',
      'thumb', 'preview', 'preview_4x5', 'preview_1x1', 'preview_9x16'
    ));
    CREATE INDEX final_variants_key_idx ON final_variants (object_key);

    ALTER TABLE downloads ADD COLUMN frame_id uuid REFERENCES frames(id) ON DELETE SET NULL;
    ALTER TABLE downloads ADD COLUMN kind text CHECK (kind IS NULL OR kind IN ('full', 'crop_4x5', 'crop_1x1', 'crop_9x16', 'print_8x10'));
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE downloads DROP COLUMN kind, DROP COLUMN frame_id;
    DROP INDEX IF EXISTS final_variants_key_idx;
    DELETE FROM final_variants WHERE kind NOT IN ('full', 'crop_4x5', 'crop_1x1', 'crop_9x16', 'print_8x10');
    ALTER TABLE final_variants DROP CONSTRAINT final_variants_kind_check;
    ALTER TABLE final_variants ADD CONSTRAINT final_variants_kind_check CHECK (kind IN ('full', 'crop_4x5', 'crop_1x1', 'crop_9x16', 'print_8x10'));
    DROP INDEX IF EXISTS finals_state_idx;
    DROP INDEX IF EXISTS finals_pending_per_frame;
    ALTER TABLE finals DROP COLUMN pending_frame_id;
  `);
}
