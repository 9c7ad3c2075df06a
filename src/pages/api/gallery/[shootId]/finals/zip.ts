import type { APIRoute } from 'astro';
import { route, conflict } from '../../../../../lib/server/http';
import { requireClient } from '../../../../../lib/server/permissions';
import { deliveredShootForClient, zipEntries } from '../../../../../lib/server/finals';
import { recordDownload, requester, zipResponse } from '../../../../../lib/server/downloads';
import { limitRate } from '../../../../../lib/server/rate-limit';

/** ZIPs a client may start per hour: plenty for a person, a wall against a loop pulling gigabytes. */
const ZIPS_PER_HOUR = 30;

/** "Download all": every final (or, with ?set=crops, every ratio crop) as one ZIP streamed from storage. */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const shoot = await deliveredShootForClient(client);
  await limitRate(`zip:client:${client.clientId}:${shoot.id}`, ZIPS_PER_HOUR, 3600);
  const set = ctx.url.searchParams.get('set') === 'crops' ? 'crops' : 'finals';
  const { entries, fileName } = await zipEntries(shoot, set);
  if (!entries.length) throw conflict('There is nothing to download yet.');
  await recordDownload({
    studioId: shoot.studio_id, shootId: shoot.id, what: set === 'crops' ? 'crops_zip' : 'finals_zip',
    ...requester(ctx, { kind: 'client', id: client.clientId }),
  });
  return zipResponse(entries, fileName, ctx.request.signal);
});
