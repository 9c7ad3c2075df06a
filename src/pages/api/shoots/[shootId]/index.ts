import type { APIRoute } from 'astro';
import { z } from 'zod';
import { route, json, readJson } from '../../../../lib/server/http';
import { requireMember } from '../../../../lib/server/permissions';
import { deleteShoot } from '../../../../lib/server/finals';
import { updateShoot } from '../../../../lib/server/shoots';
import { shootDetailsSchema } from '../../../../lib/schemas/shoot';

const deleteSchema = z.object({ title: z.string().max(400) });

/** Deletes the shoot, its stored files and its rows, once its title is typed exactly. */
export const DELETE: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:delete');
  const { title } = deleteSchema.parse(await readJson(ctx.request));
  await deleteShoot(member, ctx.params.shootId!, title);
  return json({ ok: true, url: '/desk' });
});

/** Changes the shoot's details: only the fields sent; the answer names what changed and the details now. */
export const PATCH: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:edit');
  const input = shootDetailsSchema.parse(await readJson(ctx.request));
  return json(await updateShoot(member, ctx.params.shootId!, input));
});
