import type { APIRoute } from 'astro';
import { route, json, HttpError } from '../../../lib/server/http';
import { receiveWebhook } from '../../../lib/server/orders';

/** Events are a few kilobytes; anything far larger is not one. */
const MAX_EVENT_BYTES = 512 * 1024;

/**
 * The payment provider's webhook. It is not a form post: the provider sends JSON with no Origin
 * header, which Astro's origin check lets through (it stops only form-like content types from
 * other sites). The signature over the raw body is what proves the sender.
 */
export const POST: APIRoute = route(async (ctx) => {
  const declared = Number(ctx.request.headers.get('content-length') ?? '0');
  if (declared > MAX_EVENT_BYTES) throw new HttpError(413, 'The event is too large.');
  // The exact bytes received: the signature covers them, and re-serialised JSON would not match.
  const raw = await ctx.request.text();
  if (Buffer.byteLength(raw) > MAX_EVENT_BYTES) throw new HttpError(413, 'The event is too large.');
  const outcome = await receiveWebhook(raw, ctx.request.headers.get('stripe-signature'));
  return json(outcome);
});
