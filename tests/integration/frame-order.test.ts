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

  it('numbers the picks for downloads in the same order, 1 to N with no gaps', async () => {
    const rows = await db()('frames').where({ shoot_id: shootId }).select('id', 'original_name');
    // Every frame but IMG_10.jpg is picked: the numbers close up around it.
    const picked = rows.filter((r) => r.original_name !== 'IMG_10.jpg');
    await db()('picks').insert(picked.map((r) => ({ studio_id: studioId, shoot_id: shootId, frame_id: r.id })));
    const { numbers, digits } = await frameNumbers(shootId);
    const byNumber = picked.sort((a, b) => numbers.get(a.id)! - numbers.get(b.id)!);
    expect(byNumber.map((r) => r.original_name)).toEqual(expected.filter((n) => n !== 'IMG_10.jpg'));
    expect(byNumber.map((r) => numbers.get(r.id))).toEqual([1, 2, 3, 4, 5, 6]);
    expect(digits).toBe(1);
  });
});

describe('gallery listing cache', () => {
  it('moves the shoot’s frames version whenever a frame or variant changes, and the listing follows at once', async () => {
    const studioId = (await makeStudio('Listing')).studioId;
    const made = await makeShoot(studioId, { stage: 'proofing' });
    const shootId = made.shoot.id;
    const version = async () => String((await db()('shoots').where({ id: shootId }).first('frames_version')).frames_version);
    const { galleryData } = await import('../../src/lib/server/picks');
    const session = { shootId, studioId, clientId: made.client.id } as Parameters<typeof galleryData>[0];
    const names = async () => (await galleryData(session)).frames.map((f) => f.name);

    const v0 = await version();
    const ids = [randomUUID(), randomUUID()];
    await db()('frames').insert(ids.map((id, i) => ({ id, studio_id: studioId, shoot_id: shootId, object_key: `studios/${studioId}/shoots/${shootId}/originals/${id}.jpg`, original_name: `F_${i + 1}.jpg`, bytes: 1, state: 'ready' })));
    const v1 = await version();
    expect(v1).not.toBe(v0);
    // Ready frames without their proof are not listed yet.
    expect(await names()).toEqual([]);
    await db()('frame_variants').insert(ids.flatMap((id, i) => (['thumb', 'proof'] as const).map((kind) => ({ studio_id: studioId, frame_id: id, kind, object_key: `studios/${studioId}/shoots/${shootId}/variants/${kind}${i}${'0'.repeat(58)}.jpg`, width: 10, height: 10, bytes: 1 }))));
    expect(await version()).not.toBe(v1);
    expect(await names()).toEqual(['F_1.jpg', 'F_2.jpg']);
    // Served again unchanged, then changed by hiding a frame and by removing one.
    expect(await names()).toEqual(['F_1.jpg', 'F_2.jpg']);
    await db()('frames').where({ id: ids[0] }).update({ hidden: true });
    expect(await names()).toEqual(['F_2.jpg']);
    await db()('frames').where({ id: ids[1] }).delete();
    expect(await names()).toEqual([]);
  });
});
