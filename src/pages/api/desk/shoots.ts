import type { APIRoute } from 'astro';
import { route, json } from '../../../lib/server/http';
import { requireMember } from '../../../lib/server/permissions';
import { deskQueryFromSearch, deskShootsQuerySchema } from '../../../lib/schemas/studio';
import { listDeskShoots } from '../../../lib/server/studio';

/** One page of the studio's shoots for the desk table: ?page=&pageSize=&sort=&dir=&stage=&q= */
export const GET: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'desk:view');
  const query = deskShootsQuerySchema.parse(deskQueryFromSearch(ctx.url.searchParams));
  return json(await listDeskShoots(member, query));
});
