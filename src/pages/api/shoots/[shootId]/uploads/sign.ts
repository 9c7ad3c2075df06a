import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../lib/server/permissions';
import { signRequestSchema } from '../../../../../lib/schemas/shoot';
import { signUploadRequest, originalsPrefix } from '../../../../../lib/server/uploads';
import { assertFramesEditable } from '../../../../../lib/server/shoots';
import { keys } from '../../../../../lib/server/storage';

/** Signs one S3 request of the uploader for this shoot's originals. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'frame:upload');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  assertFramesEditable(shoot);
  const req = signRequestSchema.parse(await readJson(ctx.request));
  const signed = await signUploadRequest(originalsPrefix(shoot.studio_id, shoot.id), (ext) => keys.original(shoot.studio_id, shoot.id, ext), req);
  return json(signed);
});
