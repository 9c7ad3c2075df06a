import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../../../lib/server/http';
import { requireMember, shootForMember } from '../../../../../lib/server/permissions';
import { registerUploadSchema } from '../../../../../lib/schemas/shoot';
import { registerFrame, discardUpload } from '../../../../../lib/server/uploads';
import { listFrames, frameCounts, assertFramesEditable } from '../../../../../lib/server/shoots';
import type { ShootFramesDto } from '../../../../../lib/dto';

/** The shoot's frames with processing counts, for the studio's frames board and progress. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'shoot:view');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  const [frames, counts] = await Promise.all([listFrames(shoot.id, shoot.studio_id), frameCounts(shoot.id, shoot.studio_id)]);
  const body: ShootFramesDto = { stage: shoot.stage, counts, frames };
  return json(body);
});

/** Registers a finished upload as a frame; the object must exist with the size the uploader reported. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'frame:upload');
  const shoot = await shootForMember(member, ctx.params.shootId!);
  const input = registerUploadSchema.parse(await readJson(ctx.request));
  try {
    assertFramesEditable(shoot);
  } catch (err) {
    // The picks came in while this file was uploading: it will not become a frame, so it goes.
    await discardUpload(shoot, input.key);
    throw err;
  }
  const frame = await registerFrame(shoot, input);
  return json(frame, frame.created ? 201 : 200);
});
