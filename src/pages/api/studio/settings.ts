import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { studioSettingsSchema } from '../../../lib/schemas/studio';
import { getStudioSettings, saveStudioSettings } from '../../../lib/server/studio';

export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'studio:settings');
  return json({ settings: await getStudioSettings(member.studioId) });
});

/** Saves all settings at once; a brand colour that fails AA for white button text is refused (422). */
export const PUT: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'studio:settings');
  const input = studioSettingsSchema.parse(await readJson(ctx.request));
  return json({ settings: await saveStudioSettings(member, input) });
});
