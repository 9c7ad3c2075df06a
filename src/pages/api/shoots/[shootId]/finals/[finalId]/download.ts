import type { APIRoute } from 'astro';
import { route } from '../../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../../lib/server/permissions';
import { finalDownloadResponse } from '../../../../../../lib/server/finals';

/** A studio member's download of one ready final or crop, at any stage. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  return finalDownloadResponse(ctx, shoot, { kind: 'member', id: member.userId });
});
