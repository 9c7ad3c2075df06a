import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { newShootSchema } from '../../../lib/schemas/shoot';
import { createShoot } from '../../../lib/server/shoots';

/** Creates a shoot (and a new client when asked). */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:create');
  const input = newShootSchema.parse(await readJson(ctx.request));
  const id = await createShoot(member, input);
  return json({ id, url: `/desk/shoots/${id}` }, 201);
});
