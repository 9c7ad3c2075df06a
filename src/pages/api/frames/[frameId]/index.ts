import type { APIRoute } from 'astro';
import { route, json, readJson, conflict } from '../../../../lib/server/http';
import { requireMember, isUuid } from '../../../../lib/server/permissions';
import { frameEditSchema } from '../../../../lib/schemas/shoot';
import { frameForMember, assertFramesEditable } from '../../../../lib/server/shoots';
import { db } from '../../../../lib/server/db';
import { deleteObject } from '../../../../lib/server/storage';
import { audit } from '../../../../lib/server/audit';
import { enqueueCrops } from '../../../../jobs/frame-process';
import { notFound } from '../../../../lib/server/http';

async function loadFrame(ctx: Parameters<APIRoute>[0]) {
  const member = requireMember(ctx, 'frame:edit');
  if (!isUuid(ctx.params.frameId)) throw notFound('No such frame.');
  return { member, frame: await frameForMember(member, ctx.params.frameId!) };
}

/** Hides or shows a frame, or moves its focus point (which rebuilds its crops). */
export const PATCH: APIRoute = route(async (ctx) => {
  const { member, frame } = await loadFrame(ctx);
  const edit = frameEditSchema.parse(await readJson(ctx.request));
  const changes: Record<string, unknown> = {};
  if (edit.hidden !== undefined) changes.hidden = edit.hidden;
  if (edit.focus) {
    if (frame.state !== 'ready') {
      throw conflict(frame.state === 'failed' ? 'This frame could not be built, so it has no crops to move.' : 'The frame is still being processed.');
    }
    changes.focus_x = edit.focus.x;
    changes.focus_y = edit.focus.y;
    changes.crops_pending = true;
  }
  if (Object.keys(changes).length) await db()('frames').where({ id: frame.id, studio_id: member.studioId }).update(changes);
  if (edit.focus) await enqueueCrops(frame.id);
  return json({ ok: true, rebuildingCrops: !!edit.focus });
});

/**
 * Deletes a frame with its original and variants, while the client has not yet sent picks. A frame
 * that failed processing never reached the client, so it can be removed later too (not once archived).
 */
export const DELETE: APIRoute = route(async (ctx) => {
  const { member, frame } = await loadFrame(ctx);
  const shoot = await db()('shoots').where({ id: frame.shoot_id, studio_id: member.studioId }).first('stage');
  if (frame.state !== 'failed') assertFramesEditable(shoot);
  else if (shoot.stage === 'archived') throw conflict('This shoot is archived; bring it back to change its frames.');
  const variantKeys = await db()('frame_variants').where({ frame_id: frame.id }).pluck('object_key');
  await db().transaction(async (trx) => {
    // Shoot first, then frame: the order pick writes take them in, so the two never wait on each other.
    await trx('shoots').where({ id: frame.shoot_id, studio_id: member.studioId }).forUpdate().first('id');
    await trx('frames').where({ id: frame.id }).delete();
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'frame.deleted', subjectType: 'frame', subjectId: frame.id, details: { name: frame.original_name } }, trx);
  });
  // Content-addressed variants may be shared by an identical frame elsewhere in the shoot; keep those.
  const stillUsed = new Set(await db()('frame_variants').whereIn('object_key', variantKeys).pluck('object_key'));
  await Promise.all([frame.object_key, ...variantKeys.filter((k) => !stillUsed.has(k))].map((k) => deleteObject(k).catch(() => null)));
  return json({ ok: true });
});
