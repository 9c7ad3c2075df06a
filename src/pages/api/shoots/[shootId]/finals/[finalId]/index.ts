import type { APIRoute } from 'astro';
import { route, json } from '../../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../../lib/server/permissions';
import { discardFinal } from '../../../../../../lib/server/finals';

/** Removes an uploaded final (unmatched, failed, on its way, or in place before hand-off) and its files. */
export const DELETE: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'final:upload');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  await discardFinal(member, shoot, ctx.params.finalId!);
  return json({ ok: true });
});
