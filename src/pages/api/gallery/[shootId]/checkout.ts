import type { APIRoute } from 'astro';
import { route, json } from '../../../../lib/server/http';
import { requireClient } from '../../../../lib/server/permissions';
import { paymentView, startCheckout } from '../../../../lib/server/orders';

/**
 * Opens the payment page for the client's extra retouches (the open one when there is one) and
 * answers its address; the gallery then sends the browser there.
 */
export const POST: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const { url } = await startCheckout(client);
  return json({ url });
});

/**
 * Where the client's payment stands, for the return page while it waits for the provider's word.
 * `?session=` names the payment page the browser came back from; without it, the latest order.
 */
export const GET: APIRoute = route(async (ctx) => {
  const client = requireClient(ctx, ctx.params.shootId!);
  const session = ctx.url.searchParams.get('session');
  const view = await paymentView(client, session && /^[A-Za-z0-9_]{1,255}$/.test(session) ? session : null);
  return json({
    order: view.order ? { id: view.order.id, state: view.order.state, totalMinor: view.order.totalMinor, currency: view.order.currency } : null,
  });
});
