import type { APIRoute } from 'astro';
import { route } from '../../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../../lib/server/permissions';
import { finalDownload, parseKind } from '../../../../../../lib/server/finals';
import { recordDownload, redirectToDownload, requester } from '../../../../../../lib/server/downloads';

/** A studio member's download of one ready final or crop: logged, then a five-minute link to the file. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  const kind = parseKind(ctx.url.searchParams.get('kind'));
  const file = await finalDownload(shoot, ctx.params.finalId!, kind);
  await recordDownload({
    studioId: shoot.studio_id, shootId: shoot.id, finalId: ctx.params.finalId!, frameId: file.frameId, kind,
    what: kind === 'full' ? 'final' : 'crop', ...requester(ctx, { kind: 'member', id: member.userId }),
  });
  return redirectToDownload(file.key, file.fileName);
});
