/** The demo's light notes are valid notes, so the demo opens on a working plan. */
import { describe, it, expect } from 'vitest';
import { lightNotesSchema, keyToFillFromNotes } from '../../src/lib/light';
import { DEMO_LIGHT_NOTES } from '../../seeds/01_demo_studio';

describe('demo light notes', () => {
  it('pass the same schema the light notes route uses, and give a key-to-fill reading', () => {
    const notes = lightNotesSchema.parse(DEMO_LIGHT_NOTES);
    const ratio = keyToFillFromNotes(notes);
    expect(ratio).not.toBeNull();
    expect(ratio!.stops).toBeGreaterThan(0);
  });
});
