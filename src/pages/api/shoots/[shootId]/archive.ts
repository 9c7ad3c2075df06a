import type { APIRoute } from 'astro';
import { route, json } from '../../../../lib/server/http';
import { requireMember } from '../../../../lib/server/permissions';
import { archiveShoot } from '../../../../lib/server/finals';

/** Archives the shoot: the client's gallery closes; the studio keeps the shoot and its files. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:edit');
  await archiveShoot(member, ctx.params.shootId!);
  return json({ ok: true });
});
