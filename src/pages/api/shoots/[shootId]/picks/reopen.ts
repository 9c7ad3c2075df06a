import type { APIRoute } from 'astro';
import { route, json } from '../../../../../lib/server/http';
import { requireMember } from '../../../../../lib/server/permissions';
import { reopenPicks } from '../../../../../lib/server/picks';

/** Lets the client change picks they already sent (refused once extras are paid). */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'picks:reopen');
  await reopenPicks(member, ctx.params.shootId!);
  return json({ ok: true });
});
