import type { APIRoute } from 'astro';
import { route, json, conflict, notFound } from '../../../../lib/server/http';
import { requireMember, isUuid } from '../../../../lib/server/permissions';
import { frameForMember } from '../../../../lib/server/shoots';
import { headObject } from '../../../../lib/server/storage';
import { db } from '../../../../lib/server/db';
import { enqueueFrame } from '../../../../lib/server/uploads';

/** Tries a failed frame again, when its original is still in storage (a rejected file is not). */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'frame:upload');
  if (!isUuid(ctx.params.frameId)) throw notFound('No such frame.');
  const frame = await frameForMember(member, ctx.params.frameId!);
  if (frame.state !== 'failed') throw conflict('Only a failed frame can be tried again.');
  if (!(await headObject(frame.object_key))) throw conflict('This file was refused and removed. Upload a corrected copy instead.');
  await db()('frames').where({ id: frame.id }).update({ state: 'waiting', error: null, claimed_at: null });
  await enqueueFrame(frame.id);
  return json({ ok: true });
});
