import type { APIRoute } from 'astro';
import { route, json, HttpError } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { LOGO_MAX_BYTES } from '../../../lib/schemas/studio';
import { removeWatermarkLogo, saveWatermarkLogo } from '../../../lib/server/studio';

/** Uploads the watermark logo as the raw request body (a PNG of at most 2 MB). */
export const PUT: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'studio:settings');
  const declared = Number(ctx.request.headers.get('content-length') ?? '0');
  if (declared > LOGO_MAX_BYTES) throw new HttpError(413, 'The logo is larger than 2 MB. Please export a smaller PNG.');
  const bytes = Buffer.from(await ctx.request.arrayBuffer());
  await saveWatermarkLogo(member, bytes);
  return json({ hasLogo: true });
});

export const DELETE: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'studio:settings');
  await removeWatermarkLogo(member);
  return json({ hasLogo: false });
});
