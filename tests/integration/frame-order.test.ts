/** One capture order everywhere: time first, then file names with their digits read as numbers. */
import { describe, it, expect, beforeAll } from 'vitest';
import { randomUUID } from 'node:crypto';
import { db } from '../../src/lib/server/db';
import { listFrames } from '../../src/lib/server/shoots';
import { frameNumbers } from '../../src/lib/server/finals';
import { makeStudio, makeShoot } from '../support/factories';

describe('frame order', () => {
  let studioId: string;
  let shootId: string;

  beforeAll(async () => {
    studioId = (await makeStudio('Order')).studioId;
    shootId = (await makeShoot(studioId)).shoot.id;
    // Inserted out of order on purpose. Two carry a capture time and come first, earliest first.
    const frames: [string, string | null][] = [
      ['IMG_100.jpg', null], ['img_9.jpg', null], ['IMG_10.jpg', null], ['IMG_10b.jpg', null],
      ['late.jpg', '2026-05-02T10:00:00Z'], ['early.jpg', '2026-05-02T09:00:00Z'], ['IMG_2.jpg', null],
    ];
    await db()('frames').insert(frames.map(([name, takenAt]) => {
      const id = randomUUID();
      return { id, studio_id: studioId, shoot_id: shootId, object_key: `studios/${studioId}/shoots/${shootId}/originals/${id}.jpg`, original_name: name, bytes: 1000, state: 'ready', taken_at: takenAt };
    }));
  });

  const expected = ['early.jpg', 'late.jpg', 'IMG_2.jpg', 'img_9.jpg', 'IMG_10.jpg', 'IMG_10b.jpg', 'IMG_100.jpg'];

  it('lists frames by capture time, then by name with numbers compared as numbers', async () => {
    expect((await listFrames(shootId, studioId)).map((f) => f.name)).toEqual(expected);
  });

  it('numbers frames for downloads in the same order', async () => {
    const { numbers } = await frameNumbers(shootId);
    const rows = await db()('frames').where({ shoot_id: shootId }).select('id', 'original_name');
    const byNumber = rows.sort((a, b) => numbers.get(a.id)! - numbers.get(b.id)!).map((r) => r.original_name);
    expect(byNumber).toEqual(expected);
  });
});
