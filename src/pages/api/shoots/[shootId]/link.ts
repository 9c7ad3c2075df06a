import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../lib/server/http';
import { requireMember } from '../../../../lib/server/permissions';
import { sendViewingLink, withdrawViewingLink } from '../../../../lib/server/picks';
import { sendLinkSchema } from '../../../../lib/schemas/picks';

/** Sends the client a fresh viewing link with an optional personal message; the earlier link stops working. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:send-link');
  const input = sendLinkSchema.parse(await readJson(ctx.request));
  // The token is in this answer once; only its hash is stored.
  return json(await sendViewingLink(member, ctx.params.shootId!, input), 201);
});

/** Withdraws the viewing link and ends the client's sessions. */
export const DELETE: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:send-link');
  await withdrawViewingLink(member, ctx.params.shootId!);
  return json({ ok: true });
});
