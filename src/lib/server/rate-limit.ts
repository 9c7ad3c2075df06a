import { db } from './db';
import { tooMany } from './http';

/**
 * Fixed-window counter in PostgreSQL, so every app server shares it. Throws 429 with Retry-After
 * once `limit` hits fall in `windowS` seconds for the key.
 */
export async function limitRate(key: string, limit: number, windowS: number): Promise<void> {
  const { rows } = await db().raw(
    `INSERT INTO rate_limits (key, hits, window_started_at) VALUES (?, 1, now())
     ON CONFLICT (key) DO UPDATE SET
       hits = CASE WHEN rate_limits.window_started_at < now() - make_interval(secs => ?) THEN 1 ELSE rate_limits.hits + 1 END,
       window_started_at = CASE WHEN rate_limits.window_started_at < now() - make_interval(secs => ?) THEN now() ELSE rate_limits.window_started_at END
     RETURNING hits, extract(epoch FROM (window_started_at + make_interval(secs => ?) - now()))::int AS retry_after`,
    [key, windowS, windowS, windowS],
  );
  const { hits, retry_after } = rows[0] as { hits: number; retry_after: number };
  if (hits > limit) throw tooMany(Math.max(1, retry_after));
}

export async function clearRate(key: string) {
  await db()('rate_limits').where({ key }).delete();
}

/** The caller's address as the Node adapter saw it (no proxy headers are trusted by default). */
export function clientAddress(ctx: { clientAddress?: string }): string {
  try {
    return ctx.clientAddress ?? 'unknown';
  } catch {
    return 'unknown';
  }
}
