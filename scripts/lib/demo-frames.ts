/**
 * Frames for the demo studio, rendered by Fillcard itself (synthetic head-and-shoulders images with
 * EXIF written by ExifTool) and run through the real frame pipeline, so the demo shows proofs,
 * crops, camera settings and cull hints as a real shoot would.
 */
import type { Knex } from 'knex';
import { syntheticPortrait } from './synthetic-portrait';
import { putObject, keys } from '../../src/lib/server/storage';
import { processFrame } from '../../src/jobs/frame-process';
import { processFinal } from '../../src/jobs/final-process';

const SETTINGS = [
  { ExposureTime: '1/250', FNumber: 5.6, ISO: 100, FocalLength: 85, Flash: 1 },
  { ExposureTime: '1/200', FNumber: 8, ISO: 100, FocalLength: 105, Flash: 1 },
  { ExposureTime: '1/250', FNumber: 5.6, ISO: 100, FocalLength: 85, Flash: 1 },
  { ExposureTime: '1/125', FNumber: 4, ISO: 200, FocalLength: 50, Flash: 0 },
];

async function frameFor(shootIndex: number, i: number, takenAt: Date) {
  const s = SETTINGS[i % SETTINGS.length];
  const stamp = takenAt.toISOString().slice(0, 19).replace('T', ' ').replace(/-/g, ':');
  return syntheticPortrait({
    width: 2400,
    height: 1600,
    seed: shootIndex * 1000 + i,
    exif: {
      ...s,
      Make: 'Northlight Optics',
      Model: 'NL-24 Studio',
      LensModel: s.FocalLength === 50 ? 'Northlight 50mm F1.8' : 'Northlight 85-105mm F4',
      FocalLengthIn35mmFormat: s.FocalLength,
      DateTimeOriginal: stamp,
      OffsetTimeOriginal: '+00:00',
      Orientation: 1,
    },
  });
}

export async function seedDemoFrames(knex: Knex, studioId: string): Promise<void> {
  const shoots = await knex('shoots').where({ studio_id: studioId }).orderBy('created_at').select('id', 'studio_id', 'title', 'shot_on', 'stage', 'allowance');
  const counts: Record<string, number> = { proofing: 18, draft: 8, picks_in: 10, delivered: 6 };
  for (const [index, shoot] of shoots.entries()) {
    const n = counts[shoot.stage] ?? 0;
    const frameIds: string[] = [];
    for (let i = 0; i < n; i++) {
      const takenAt = new Date(new Date(shoot.shot_on).getTime() + 10 * 3600_000 + i * 47_000);
      const original = await frameFor(index, i, takenAt);
      const key = keys.original(shoot.studio_id, shoot.id, 'jpg');
      await putObject(key, original, 'image/jpeg');
      const [frame] = await knex('frames')
        .insert({ studio_id: shoot.studio_id, shoot_id: shoot.id, object_key: key, original_name: `HLP_${String(2040 + index * 100 + i).padStart(4, '0')}.jpg`, bytes: original.length })
        .returning('id');
      await processFrame(frame.id, true);
      frameIds.push(frame.id);
    }
    if (shoot.stage === 'picks_in' || shoot.stage === 'delivered') {
      const notes = ['Soften the flyaways, please', '', 'This one for the family wall'];
      for (const [i, frameId] of frameIds.slice(0, 3).entries()) {
        await knex('picks').insert({ studio_id: shoot.studio_id, shoot_id: shoot.id, frame_id: frameId, note: notes[i] });
      }
    }
    if (shoot.stage === 'delivered') {
      // Finals for the picks, as a retoucher would upload them, through the real finals job.
      for (const [i, frameId] of frameIds.slice(0, 3).entries()) {
        const takenAt = new Date(new Date(shoot.shot_on).getTime() + 10 * 3600_000 + i * 47_000);
        const final = await frameFor(index, i, takenAt);
        const key = keys.final(shoot.studio_id, shoot.id, 'jpg');
        await putObject(key, final, 'image/jpeg');
        const [row] = await knex('finals')
          .insert({ studio_id: shoot.studio_id, shoot_id: shoot.id, object_key: key, original_name: `HLP_${String(2040 + index * 100 + i).padStart(4, '0')}-edit.jpg`, bytes: final.length, pending_frame_id: frameId })
          .returning('id');
        await processFinal(row.id, true);
      }
      // Handed off with all three: the client has been told about every final.
      await knex('shoots').where({ id: shoot.id }).update({ announced_finals: 3 });
    }
    console.log(`[fillcard] demo: ${n} frames for “${shoot.title}”`);
  }
}
