import type { APIRoute } from 'astro';
import { z } from 'zod';
import { route, json, readJson } from '../../../../lib/server/http';
import { requireMember } from '../../../../lib/server/permissions';
import { handOff, NeedsConfirmation } from '../../../../lib/server/finals';

const handOffSchema = z.object({ partial: z.boolean().optional() });

/** Releases the ready finals to the client and e-mails them; with picks missing a final it needs `partial: true`. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:hand-off');
  const input = handOffSchema.parse(await readJson(ctx.request));
  try {
    return json(await handOff(member, ctx.params.shootId!, !!input.partial));
  } catch (err) {
    if (err instanceof NeedsConfirmation) return json({ error: err.message, needsConfirmation: true, ...err.details }, 409);
    throw err;
  }
});
