import type { APIRoute } from 'astro';
import { route, conflict } from '../../../../lib/server/http';
import { requireMember, isUuid } from '../../../../lib/server/permissions';
import { frameForMember } from '../../../../lib/server/shoots';
import { headObject } from '../../../../lib/server/storage';
import { notFound } from '../../../../lib/server/http';
import { recordDownload, redirectToDownload, requester } from '../../../../lib/server/downloads';

/** Browsers show these themselves; a TIFF is always downloaded. */
const VIEWABLE = new Set(['jpg', 'jpeg', 'png', 'webp']);
const TYPES: Record<string, string> = { jpg: 'image/jpeg', jpeg: 'image/jpeg', png: 'image/png', tif: 'image/tiff', tiff: 'image/tiff', webp: 'image/webp' };

/**
 * The original of a frame, for editing, under the file name it was uploaded with; logged. With
 * `?view=1` it opens in the browser instead (JPEG, PNG, WebP), to judge focus at full size without
 * the proof's watermark.
 */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'original:download');
  if (!isUuid(ctx.params.frameId)) throw notFound('No such frame.');
  const frame = await frameForMember(member, ctx.params.frameId);
  // A refused upload's file was removed: say so rather than hand out a link to nothing.
  if (frame.state === 'failed' || !(await headObject(frame.object_key))) throw conflict('The original of this frame is no longer in storage.');
  const ext = String(frame.object_key).split('.').pop() ?? 'jpg';
  const view = ctx.url.searchParams.get('view') === '1' && VIEWABLE.has(ext);
  if (!view) {
    await recordDownload({
      studioId: frame.studio_id, shootId: frame.shoot_id, frameId: frame.id, what: 'original',
      ...requester(ctx, { kind: 'member', id: member.userId }),
    });
  }
  return redirectToDownload(frame.object_key, frame.original_name, TYPES[ext] ?? 'application/octet-stream', { inline: view });
});
