import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../../lib/server/http';
import { requireClient } from '../../../../../lib/server/permissions';
import { savePick, removePick } from '../../../../../lib/server/picks';
import { pickInputSchema } from '../../../../../lib/schemas/picks';

/** Picks a frame, with its note when one is sent; the same request twice leaves one pick. */
export const PUT: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const input = pickInputSchema.parse(await readJson(ctx.request, 16 * 1024));
  return json(await savePick(client, ctx.params.frameId!, input));
});

/** Takes the frame out of the picks (fine when it was not picked). */
export const DELETE: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  await removePick(client, ctx.params.frameId!);
  return json({ ok: true });
});
