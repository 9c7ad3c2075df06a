import type { APIRoute } from 'astro';
import { route } from '../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../lib/server/permissions';
import { zipDownloadResponse } from '../../../../../lib/server/finals';

/** The studio's copy of every ready final (or, with ?set=crops, every ratio crop) as one ZIP. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  return zipDownloadResponse(ctx, shoot, { kind: 'member', id: member.userId });
});
