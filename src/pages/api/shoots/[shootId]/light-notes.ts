import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../lib/server/permissions';
import { lightNotesSchema } from '../../../../lib/light';
import { db } from '../../../../lib/server/db';
import { audit } from '../../../../lib/server/audit';

/** The shoot's light notes; empty ({}) until the owner saves some. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId ?? '');
  return json({ lightNotes: shoot.light_notes ?? {} });
});

/** Replaces the shoot's light notes with a plan checked by the same schema the editor uses. */
export const PUT: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:edit');
  const shoot = await shootForMember(member, ctx.params.shootId ?? '');
  const notes = lightNotesSchema.parse(await readJson(ctx.request));
  await db().transaction(async (trx) => {
    await trx('shoots').where({ id: shoot.id, studio_id: member.studioId }).update({ light_notes: JSON.stringify(notes), updated_at: trx.fn.now() });
    await audit({ studioId: member.studioId, actorKind: 'member', actorId: member.userId, action: 'shoot.light_notes_saved', subjectType: 'shoot', subjectId: shoot.id, details: { sources: notes.sources.length } }, trx);
  });
  return json({ lightNotes: notes });
});
