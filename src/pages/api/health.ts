import type { APIRoute } from 'astro';
import { db } from '../../lib/server/db';
import { json } from '../../lib/server/http';

/** Liveness and database reachability, for load balancers and the start script. */
export const GET: APIRoute = async () => {
  try {
    await db().raw('SELECT 1');
    return json({ ok: true });
  } catch {
    return json({ ok: false, error: 'The database is not reachable.' }, 503);
  }
};
