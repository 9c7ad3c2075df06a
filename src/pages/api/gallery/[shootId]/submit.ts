import type { APIRoute } from 'astro';
import { route, json } from '../../../../lib/server/http';
import { requireClient } from '../../../../lib/server/permissions';
import { submitPicks } from '../../../../lib/server/picks';

/** Sends the picks to the studio and locks them; says whether extras must be paid first. */
export const POST: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  return json(await submitPicks(client));
});
