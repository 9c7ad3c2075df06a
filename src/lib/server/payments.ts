/**
 * Payments through Stripe Checkout with the official SDK. The one difference between local runs
 * and production is where the SDK sends its requests: STRIPE_API_BASE (the local stand-in) gives
 * it a host, port and protocol; unset, it talks to the real API. Everything else is the same code.
 *
 * Only a signed webhook marks an order paid; the browser's return to success_url proves nothing.
 */
import Stripe from 'stripe';
import { config, type Config } from './config';
import { HttpError } from './http';
import { minorUnits } from '../currency';
import type { TaxMode } from '../pricing';

let client: Stripe | undefined;

/** The SDK's constructor options for this configuration. */
export function stripeClientOptions(c: Pick<Config, 'STRIPE_API_BASE'> = config()): Stripe.StripeConfig {
  // Retried requests are safe: every POST carries an idempotency key (ours, or the SDK's own).
  const options: Stripe.StripeConfig = { maxNetworkRetries: 2, timeout: 30_000 };
  if (c.STRIPE_API_BASE) {
    const base = new URL(c.STRIPE_API_BASE);
    if (base.pathname !== '/' || base.search || base.hash) {
      throw new Error(`STRIPE_API_BASE must be an origin such as http://127.0.0.1:12111, got ${c.STRIPE_API_BASE}`);
    }
    const protocol = base.protocol === 'http:' ? 'http' : 'https';
    options.host = base.hostname;
    options.protocol = protocol;
    options.port = base.port ? Number(base.port) : protocol === 'http' ? 80 : 443;
  }
  return options;
}

/** The shared SDK client, built from configuration on first use. */
export function stripe(): Stripe {
  client ??= new Stripe(config().STRIPE_SECRET_KEY, stripeClientOptions());
  return client;
}

// ---------------------------------------------------------------------------------------------
// Webhooks

/** Stripe's default: a signature older than five minutes is refused, which stops replays. */
export const WEBHOOK_TOLERANCE_S = 300;

export type WebhookRejectedReason = 'missing_signature' | 'bad_signature' | 'bad_payload';

/** A webhook that must not be acted on; answered with 400 so the sender sees the refusal. */
export class WebhookRejected extends HttpError {
  constructor(
    readonly reason: WebhookRejectedReason,
    message: string,
    options: { cause?: unknown } = {},
  ) {
    super(400, message);
    this.name = 'WebhookRejected';
    if (options.cause !== undefined) this.cause = options.cause;
  }
}

/**
 * The event in a webhook, once its Stripe-Signature header proves it came from Stripe (or the local
 * stand-in) with STRIPE_WEBHOOK_SECRET. Pass the body exactly as received: re-serialised JSON no
 * longer matches the signature.
 */
export function verifyWebhook(rawBody: string, signatureHeader: string | null): Stripe.Event {
  if (!signatureHeader) throw new WebhookRejected('missing_signature', 'The Stripe-Signature header is missing.');
  try {
    return Stripe.webhooks.constructEvent(rawBody, signatureHeader, config().STRIPE_WEBHOOK_SECRET, WEBHOOK_TOLERANCE_S);
  } catch (err) {
    if (err instanceof Stripe.errors.StripeSignatureVerificationError) {
      throw new WebhookRejected('bad_signature', 'The webhook signature does not verify.', { cause: err });
    }
    throw new WebhookRejected('bad_payload', 'The webhook body is not a readable event.', { cause: err });
  }
}

// ---------------------------------------------------------------------------------------------
// Checkout

/** The order figures a Checkout Session charges: priceExtras' result plus the price and currency. */
export interface CheckoutOrder {
  extras: number;
  unitPriceMinor: number;
  taxMinor: number;
  totalMinor: number;
  taxMode: TaxMode;
  /** ISO 4217 code, either case. */
  currency: string;
  /** Shown under the line item on the payment page, e.g. the shoot's title. */
  description?: string;
}

/** An order Fillcard cannot charge as it stands; a bug or bad data, never the client's doing. */
export class CheckoutOrderError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CheckoutOrderError';
  }
}

/**
 * Currencies the payment provider counts differently from ISO 4217 (it takes ISK in hundredths and
 * MGA in whole units, per its currency guide), so an ISO minor-unit amount would be off by 100×.
 */
const PROVIDER_UNIT_DIFFERS = new Set(['ISK', 'MGA']);

function checkWhole(value: number, field: string, min: number) {
  if (!Number.isSafeInteger(value) || value < min) {
    throw new CheckoutOrderError(`${field} must be a whole number of at least ${min}, got ${String(value)}`);
  }
}

/**
 * The Checkout line items whose sum is exactly the order total. Tax exclusive: "Extra retouch" ×
 * extras at the unit price, plus one "Tax" line when there is tax. Tax inclusive: only the extras,
 * as the unit price already holds the tax. Refuses an order whose figures do not add up.
 */
export function checkoutLineItems(order: CheckoutOrder): Stripe.Checkout.SessionCreateParams.LineItem[] {
  checkWhole(order.extras, 'extras', 1);
  checkWhole(order.unitPriceMinor, 'unitPriceMinor', 0);
  checkWhole(order.taxMinor, 'taxMinor', 0);
  checkWhole(order.totalMinor, 'totalMinor', 1);
  const code = order.currency.toUpperCase();
  const digits = minorUnits(code);
  if (PROVIDER_UNIT_DIFFERS.has(code)) {
    throw new CheckoutOrderError(`Card payments in ${code} are not supported: the payment provider counts its amounts differently from ISO 4217.`);
  }
  // The provider's rule for three-decimal currencies: the charged amount must end in 0.
  if (digits === 3 && order.totalMinor % 10 !== 0) {
    throw new CheckoutOrderError(`A ${code} total must end in 0 for card payments; ${order.totalMinor} does not.`);
  }
  if (order.taxMode !== 'exclusive' && order.taxMode !== 'inclusive') {
    throw new CheckoutOrderError(`taxMode must be "exclusive" or "inclusive", got ${String(order.taxMode)}`);
  }
  const currency = code.toLowerCase();
  const extrasAmount = order.extras * order.unitPriceMinor;
  const expected = order.taxMode === 'exclusive' ? extrasAmount + order.taxMinor : extrasAmount;
  if (expected !== order.totalMinor) {
    throw new CheckoutOrderError(
      `Order figures do not add up (${order.taxMode}): ${order.extras} × ${order.unitPriceMinor}` +
        `${order.taxMode === 'exclusive' ? ` + ${order.taxMinor}` : ''} ≠ ${order.totalMinor}`,
    );
  }

  const description = order.description?.trim();
  const items: Stripe.Checkout.SessionCreateParams.LineItem[] = [
    {
      quantity: order.extras,
      price_data: {
        currency,
        unit_amount: order.unitPriceMinor,
        product_data: { name: 'Extra retouch', ...(description ? { description } : {}) },
      },
    },
  ];
  if (order.taxMode === 'exclusive' && order.taxMinor > 0) {
    items.push({ quantity: 1, price_data: { currency, unit_amount: order.taxMinor, product_data: { name: 'Tax' } } });
  }
  return items;
}

export interface CreateCheckoutSessionArgs extends CheckoutOrder {
  orderId: string;
  shootId: string;
  studioId: string;
  clientEmail: string | null;
  /** Where the browser returns after paying; `{CHECKOUT_SESSION_ID}` in it is replaced by the session id. */
  successUrl: string;
  cancelUrl: string;
  description: string;
}

/**
 * Opens a Checkout Session for an order. The idempotency key is the order's, so a retried or
 * doubled request returns the same session instead of a second one (for 24 hours, the provider's
 * key lifetime; a session that expired or was declined within that time comes back as it is, so
 * paying again needs a new order).
 */
export async function createCheckoutSession(args: CreateCheckoutSessionArgs): Promise<{ id: string; url: string }> {
  const lineItems = checkoutLineItems(args);
  const session = await stripe().checkout.sessions.create(
    {
      mode: 'payment',
      line_items: lineItems,
      success_url: args.successUrl,
      cancel_url: args.cancelUrl,
      client_reference_id: args.orderId,
      ...(args.clientEmail ? { customer_email: args.clientEmail } : {}),
      metadata: { order_id: args.orderId, shoot_id: args.shootId, studio_id: args.studioId },
    },
    { idempotencyKey: `order-${args.orderId}` },
  );
  if (!session.url) {
    throw new Error(`Checkout Session ${session.id} for order ${args.orderId} has no payment page (status ${session.status})`);
  }
  return { id: session.id, url: session.url };
}

export async function retrieveCheckoutSession(id: string): Promise<Stripe.Checkout.Session> {
  return stripe().checkout.sessions.retrieve(id);
}

/**
 * Refunds a payment in full, or amountMinor of it. The idempotency key names the payment and the
 * amount, so a doubled click refunds once.
 */
export async function refundPayment(paymentIntentId: string, amountMinor?: number): Promise<Stripe.Refund> {
  if (amountMinor !== undefined) checkWhole(amountMinor, 'amountMinor', 1);
  return stripe().refunds.create(
    { payment_intent: paymentIntentId, ...(amountMinor !== undefined ? { amount: amountMinor } : {}) },
    { idempotencyKey: `refund-${paymentIntentId}-${amountMinor ?? 'full'}` },
  );
}
