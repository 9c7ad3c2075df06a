import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../../lib/server/permissions';
import { signRequestSchema } from '../../../../../../lib/schemas/shoot';
import { signUploadRequest } from '../../../../../../lib/server/uploads';
import { assertFinalsOpen, finalsPrefix } from '../../../../../../lib/server/finals';
import { keys } from '../../../../../../lib/server/storage';

/** Signs one S3 request of the uploader for this shoot's finals; keys are made here, under finals/. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'final:upload');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  assertFinalsOpen(shoot);
  const req = signRequestSchema.parse(await readJson(ctx.request));
  const signed = await signUploadRequest(finalsPrefix(shoot.studio_id, shoot.id), (ext) => keys.final(shoot.studio_id, shoot.id, ext), req);
  return json(signed);
});
