import type { APIRoute } from 'astro';
import { z } from 'zod';
import { route, json, readJson } from '../../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../../lib/server/permissions';
import { matchFinal, NeedsConfirmation } from '../../../../../../lib/server/finals';

const matchSchema = z.object({ frameId: z.string().max(64), replace: z.boolean().optional() });

/** Matches an unmatched final to a pick by hand; replacing a pick's final needs `replace: true`. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'final:upload');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  const input = matchSchema.parse(await readJson(ctx.request));
  try {
    await matchFinal(member, shoot, ctx.params.finalId!, input.frameId, !!input.replace);
  } catch (err) {
    if (err instanceof NeedsConfirmation) return json({ error: err.message, needsConfirmation: true, ...err.details }, 409);
    throw err;
  }
  return json({ ok: true });
});
