import type { APIRoute } from 'astro';
import { route, json, readJson } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { clientSchema } from '../../../lib/schemas/clients';
import { clientShoots, deleteClient, getClient, updateClient } from '../../../lib/server/clients';

export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'client:manage');
  const client = await getClient(member.studioId, ctx.params.clientId ?? '');
  return json({ client, shoots: await clientShoots(member.studioId, client.id) });
});

export const PUT: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'client:manage');
  // Another studio's client is missing whatever the body says.
  const client = await getClient(member.studioId, ctx.params.clientId ?? '');
  const input = clientSchema.parse(await readJson(ctx.request));
  return json({ client: await updateClient(member, client.id, input) });
});

/** Deletes a client with no shoots, archives one whose shoots are all archived, refuses otherwise (409). */
export const DELETE: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'client:manage');
  return json(await deleteClient(member, ctx.params.clientId ?? ''));
});
