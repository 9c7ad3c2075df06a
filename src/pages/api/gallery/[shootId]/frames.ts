import type { APIRoute } from 'astro';
import { route, json } from '../../../../lib/server/http';
import { requireClient } from '../../../../lib/server/permissions';
import { galleryData } from '../../../../lib/server/picks';

/** The client's gallery: visible frames (thumbnail and watermarked proof), their picks, and the package terms. */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  return json(await galleryData(client));
});
