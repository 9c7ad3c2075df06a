import type { APIRoute } from 'astro';
import { route } from '../../../../../lib/server/http';
import { requireClient } from '../../../../../lib/server/permissions';
import { deliveredShootForClient, finalDownloadResponse } from '../../../../../lib/server/finals';

/** The client's download of one final or one of its crops, while downloads are open. */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const shoot = await deliveredShootForClient(client);
  return finalDownloadResponse(ctx, shoot, { kind: 'client', id: client.clientId });
});
