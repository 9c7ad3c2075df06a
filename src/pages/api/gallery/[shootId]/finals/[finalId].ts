import type { APIRoute } from 'astro';
import { route } from '../../../../../lib/server/http';
import { requireClient } from '../../../../../lib/server/permissions';
import { deliveredShootForClient, finalDownload, parseKind } from '../../../../../lib/server/finals';
import { recordDownload, redirectToDownload, requester } from '../../../../../lib/server/downloads';

/**
 * The client's download of one final (?kind=full) or one of its crops: logged, then a redirect to a
 * five-minute link that saves it as "Client_Shoot_07.jpg".
 */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const shoot = await deliveredShootForClient(client);
  const kind = parseKind(ctx.url.searchParams.get('kind'));
  const file = await finalDownload(shoot, ctx.params.finalId!, kind);
  await recordDownload({
    studioId: shoot.studio_id, shootId: shoot.id, finalId: ctx.params.finalId!, frameId: file.frameId, kind,
    what: kind === 'full' ? 'final' : 'crop', ...requester(ctx, { kind: 'client', id: client.clientId }),
  });
  return redirectToDownload(file.key, file.fileName);
});
