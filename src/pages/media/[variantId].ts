import type { APIRoute } from 'astro';
import { db } from '../../lib/server/db';
import { isUuid } from '../../lib/server/permissions';
import { variantUrl } from '../../lib/server/media';

const notFound = () => new Response('Not found.', { status: 404, headers: { 'Cache-Control': 'no-store' } });

/**
 * A frame variant, for whoever may see it: members of the frame's studio see every variant; the
 * client of the frame's shoot sees only the watermarked thumbnail and proof of ready, visible frames.
 * Anyone else gets 404. Answers with a redirect to a short-lived presigned URL of the object.
 */
export const GET: APIRoute = async ({ params, locals }) => {
  if (!isUuid(params.variantId)) return notFound();
  const row = await db()('frame_variants as v')
    .join('frames as f', 'f.id', 'v.frame_id')
    .where('v.id', params.variantId)
    .first('v.object_key', 'v.kind', 'v.studio_id', 'f.shoot_id', 'f.state', 'f.hidden');
  if (!row) return notFound();
  const member = locals.member;
  const client = locals.client;
  const allowed =
    (member && member.studioId === row.studio_id) ||
    (client && client.shootId === row.shoot_id && client.passcodeOk && !client.closed &&
      (row.kind === 'thumb' || row.kind === 'proof') && row.state === 'ready' && !row.hidden);
  if (!allowed) return notFound();
  return new Response(null, {
    status: 302,
    headers: { Location: await variantUrl(row.object_key), 'Cache-Control': 'private, max-age=1800' },
  });
};
