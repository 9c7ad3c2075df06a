import type { APIRoute } from 'astro';
import { route, json } from '../../../../lib/server/http';
import { requireMember } from '../../../../lib/server/permissions';
import { refundOrder } from '../../../../lib/server/orders';

/** Refunds a paid order in full through the payment provider. Owners only; another studio's order is a 404. */
export const POST: APIRoute = route(async (ctx) => {
  const member = requireMember(ctx, 'money:refund');
  const order = await refundOrder(member, ctx.params.orderId!);
  return json({ order });
});
