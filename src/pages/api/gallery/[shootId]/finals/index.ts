import type { APIRoute } from 'astro';
import { route, json } from '../../../../../lib/server/http';
import { requireClient } from '../../../../../lib/server/permissions';
import { galleryFinals } from '../../../../../lib/server/finals';

/** The client's finals after hand-off: previews, sizes and download links. */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  return json(await galleryFinals(client));
});
