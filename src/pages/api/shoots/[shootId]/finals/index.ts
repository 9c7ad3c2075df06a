import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../../lib/server/http';
import { requireMember } from '../../../../../lib/server/permissions';
import { registerUploadSchema } from '../../../../../lib/schemas/shoot';
import { deskShoot, finalsDesk, registerFinal } from '../../../../../lib/server/finals';

/** The Finals tab's data: picks with their finals, files waiting to be matched, the download log (owners). */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await deskShoot(member, ctx.params.shootId!);
  return json(await finalsDesk(member, shoot));
});

/** Registers a finished upload as a final and matches it to its pick by file name when it can. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'final:upload');
  const shoot = await deskShoot(member, ctx.params.shootId!);
  const input = registerUploadSchema.parse(await readJson(ctx.request));
  const final = await registerFinal(member, shoot, input);
  return json(final, final.created ? 201 : 200);
});
