import type { APIRoute } from 'astro';
import { route, conflict } from '../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../lib/server/permissions';
import { zipEntries } from '../../../../../lib/server/finals';
import { recordDownload, requester, zipResponse } from '../../../../../lib/server/downloads';

/** Every ready final (or, with ?set=crops, every ratio crop) as one ZIP streamed from storage. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  const set = ctx.url.searchParams.get('set') === 'crops' ? 'crops' : 'finals';
  const { entries, fileName } = await zipEntries(shoot, set);
  if (!entries.length) throw conflict('There is no ready final to download yet.');
  await recordDownload({
    studioId: shoot.studio_id, shootId: shoot.id, what: set === 'crops' ? 'crops_zip' : 'finals_zip',
    ...requester(ctx, { kind: 'member', id: member.userId }),
  });
  return zipResponse(entries, fileName, ctx.request.signal);
});
