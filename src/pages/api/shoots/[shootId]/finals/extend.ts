import type { APIRoute } from 'astro';
import { z } from 'zod';
import { route, json, readJson } from '../../../../../lib/server/http';
import { requireMember } from '../../../../../lib/server/permissions';
import { extendDownloads, EXTEND_DAYS_MAX } from '../../../../../lib/server/finals';

const extendSchema = z.object({ days: z.number().int('Use whole days.').min(1, 'Extend by at least one day.').max(EXTEND_DAYS_MAX, `Extend by at most ${EXTEND_DAYS_MAX} days at a time.`) });

/** Keeps a delivered shoot's downloads open longer (reopening them if they have closed). */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:hand-off');
  const { days } = extendSchema.parse(await readJson(ctx.request));
  const downloadUntil = await extendDownloads(member, ctx.params.shootId!, days);
  return json({ downloadUntil });
});
