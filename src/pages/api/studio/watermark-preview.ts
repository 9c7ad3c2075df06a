import type { APIRoute } from 'astro';
import { z } from 'zod';
import { route } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { OPACITY_MAX_PCT, OPACITY_MIN_PCT, WATERMARK_TEXT_MAX } from '../../../lib/schemas/studio';
import { renderWatermarkPreview, studioLogo } from '../../../lib/server/studio';
import { limitRate } from '../../../lib/server/rate-limit';

const previewQuery = z.object({
  text: z.string().trim().max(WATERMARK_TEXT_MAX).default(''),
  opacity: z.coerce.number().int().min(OPACITY_MIN_PCT).max(OPACITY_MAX_PCT),
  logo: z.enum(['0', '1']).default('0'),
});

/**
 * A sample frame with the watermark as proofs get it, drawn by the proof builder's own overlay:
 * ?text=&opacity=(5–90)&logo=1 to use the uploaded logo instead of the text.
 */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'studio:settings');
  const q = previewQuery.parse(Object.fromEntries(ctx.url.searchParams));
  await limitRate(`watermark-preview:${member.studioId}`, 600, 600);
  const logo = q.logo === '1' ? await studioLogo(member.studioId) : null;
  const jpeg = await renderWatermarkPreview({ text: q.text, opacity: q.opacity / 100, logo });
  return new Response(new Uint8Array(jpeg), {
    headers: { 'Content-Type': 'image/jpeg', 'Cache-Control': 'private, max-age=600', 'Content-Length': String(jpeg.length) },
  });
});
