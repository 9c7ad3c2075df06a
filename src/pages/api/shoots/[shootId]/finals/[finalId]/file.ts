import type { APIRoute } from 'astro';
import { route, notFound, conflict } from '../../../../../../lib/server/http';
import { requireMember, shootForMember, isUuid } from '../../../../../../lib/server/permissions';
import { db } from '../../../../../../lib/server/db';
import { headObject, presignGet } from '../../../../../../lib/server/storage';

const TYPES: Record<string, string> = { jpg: 'image/jpeg', png: 'image/png', tiff: 'image/tiff', webp: 'image/webp' };

/**
 * The uploaded file of a final, shown in the browser, so whoever matches it by hand can see what it
 * is. A studio-only view of a work file: deliveries go through the logged download routes.
 */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  if (!isUuid(ctx.params.finalId)) throw notFound('No such final in this shoot.');
  const final = await db()('finals').where({ id: ctx.params.finalId, shoot_id: shoot.id, studio_id: shoot.studio_id }).whereNull('superseded_at').first('object_key');
  if (!final) throw notFound('No such final in this shoot.');
  if (!(await headObject(final.object_key))) throw conflict('This file is no longer in storage.');
  const ext = String(final.object_key).split('.').pop() ?? 'jpg';
  const url = await presignGet(final.object_key, { expiresIn: 300, contentType: TYPES[ext] ?? 'application/octet-stream' });
  return new Response(null, { status: 302, headers: { Location: url, 'Cache-Control': 'no-store' } });
});
