import type { APIRoute } from 'astro';
import { route, json } from '../../../../lib/server/http';
import { requireMember } from '../../../../lib/server/permissions';
import { restoreShoot } from '../../../../lib/server/finals';

/** Brings an archived shoot back to the stage it was archived from. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:edit');
  return json(await restoreShoot(member, ctx.params.shootId!));
});
