import type { APIRoute } from 'astro';
import { route, json } from '../../../../../lib/server/http';
import { requireMember } from '../../../../../lib/server/permissions';
import { announceFinals } from '../../../../../lib/server/finals';

/** E-mails the client that finals ready since the hand-off (or the last such e-mail) are there. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:hand-off');
  return json(await announceFinals(member, ctx.params.shootId!));
});
