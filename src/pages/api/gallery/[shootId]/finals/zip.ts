import type { APIRoute } from 'astro';
import { route } from '../../../../../lib/server/http';
import { requireClient } from '../../../../../lib/server/permissions';
import { deliveredShootForClient, zipDownloadResponse } from '../../../../../lib/server/finals';
import { limitRate } from '../../../../../lib/server/rate-limit';

/** ZIPs a client may start per hour: plenty for a person, a wall against a loop pulling gigabytes. */
const ZIPS_PER_HOUR = 30;

/** The client's "download all" (or, with ?set=crops, every ratio crop), while downloads are open. */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const shoot = await deliveredShootForClient(client);
  await limitRate(`zip:client:${client.clientId}:${shoot.id}`, ZIPS_PER_HOUR, 3600);
  return zipDownloadResponse(ctx, shoot, { kind: 'client', id: client.clientId });
});
