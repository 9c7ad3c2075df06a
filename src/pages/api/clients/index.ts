import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { clientSchema } from '../../../lib/schemas/clients';
import { createClient, listClients } from '../../../lib/server/clients';

/** The studio's clients: ?q= searches name and e-mail, ?archived=1 lists archived ones. */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'client:manage');
  const q = (ctx.url.searchParams.get('q') ?? '').slice(0, 120);
  const clients = await listClients(member.studioId, { q, archived: ctx.url.searchParams.get('archived') === '1' });
  return json({ clients });
});

export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'client:manage');
  const input = clientSchema.parse(await readJson(ctx.request));
  const client = await createClient(member, input);
  return json({ client, url: `/desk/clients/${client.id}` }, 201);
});
