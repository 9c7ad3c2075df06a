import type { Knex } from 'knex';

/** Renders and processes the demo shoots' frames. Filled in once the frame pipeline lands. */
export async function seedDemoFrames(_knex: Knex): Promise<void> {}
