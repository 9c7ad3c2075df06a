/**
 * Orders for extra retouches: opening a payment page for the client's extras, settling what the
 * payment provider reports, and refunds. The rules that keep money right:
 *
 * - An order's figures come from priceExtras at the moment it is made and never change; a new price
 *   or pick count means a new order. Each attempt after a decline or expiry is a new order too, so
 *   the provider's idempotency key (one per order) never hands back a dead payment page.
 * - Only the provider's own record of a Checkout Session, re-read through its API, moves an order
 *   to paid or expired. The signed webhook tells us to look; the browser's return proves nothing.
 * - No database lock is held while the provider is called: the local stand-in (like the real
 *   service, sometimes) posts its webhook before it answers, and that webhook needs the same rows.
 *   Locks are always taken shoot first, then order, so the webhook and checkout never deadlock.
 */
import Stripe from 'stripe';
import type { Knex } from 'knex';
import { db } from './db';
import { config } from './config';
import { HttpError, conflict, notFound } from './http';
import { audit } from './audit';
import { queueMail, dispatchMail, renderMail } from './mail';
import {
  CheckoutOrderError,
  createCheckoutSession,
  refundPayment,
  retrieveCheckoutSession,
  stripe,
  verifyWebhook,
} from './payments';
import { isUuid } from './permissions';
import type { SessionClient } from './client-access';
import type { SessionMember } from './auth';
import { completePicks } from './picks';
import { priceExtras, PricingInputError, type TaxMode } from '../pricing';
import { formatMoney } from '../currency';

/** Amount columns are PostgreSQL `integer`: nothing above this fits. */
export const MAX_MINOR = 2_147_483_647;

export const PAYMENT_UNAVAILABLE = 'Payment is unavailable right now; your picks are safe, try again in a minute.';
export const REFUND_UNAVAILABLE = 'Refunds are unavailable right now; nothing was refunded. Try again in a minute.';

export type OrderState = 'pending' | 'paid' | 'expired' | 'refunded' | 'failed';

interface OrderRow {
  id: string;
  studio_id: string;
  shoot_id: string;
  attempt: number;
  extras: number;
  unit_price_minor: number;
  net_minor: number;
  tax_minor: number;
  total_minor: number;
  currency: string;
  tax_rate_bp: number;
  tax_mode: TaxMode;
  state: OrderState;
  checkout_session_id: string | null;
  checkout_url: string | null;
  client_email: string | null;
  payment_intent_id: string | null;
  refunded_minor: number;
  refund_id: string | null;
  failure: string | null;
  paid_at: Date | null;
  refunded_at: Date | null;
  created_at: Date;
  updated_at: Date;
}

/** An order as pages and islands see it: figures and times, never the provider's ids or URLs. */
export interface OrderDto {
  id: string;
  attempt: number;
  state: OrderState;
  extras: number;
  unitPriceMinor: number;
  netMinor: number;
  taxMinor: number;
  totalMinor: number;
  refundedMinor: number;
  currency: string;
  taxRateBp: number;
  taxMode: TaxMode;
  createdAt: string;
  paidAt: string | null;
  refundedAt: string | null;
}

export function toOrderDto(o: OrderRow): OrderDto {
  return {
    id: o.id,
    attempt: o.attempt,
    state: o.state,
    extras: o.extras,
    unitPriceMinor: o.unit_price_minor,
    netMinor: o.net_minor,
    taxMinor: o.tax_minor,
    totalMinor: o.total_minor,
    refundedMinor: o.refunded_minor,
    currency: o.currency.trim(),
    taxRateBp: o.tax_rate_bp,
    taxMode: o.tax_mode,
    createdAt: new Date(o.created_at).toISOString(),
    paidAt: o.paid_at ? new Date(o.paid_at).toISOString() : null,
    refundedAt: o.refunded_at ? new Date(o.refunded_at).toISOString() : null,
  };
}

// ---------------------------------------------------------------------------------------------
// Figures

export interface OrderFigures {
  extras: number;
  unitPriceMinor: number;
  netMinor: number;
  taxMinor: number;
  totalMinor: number;
  currency: string;
  taxRateBp: number;
  taxMode: TaxMode;
}

interface ShootTerms {
  allowance: number;
  extra_price_minor: number;
  currency: string;
  tax_rate_bp: number;
  tax_mode: TaxMode;
}

/** What the client's picks cost under the shoot's terms, refused when a figure would not fit a column. */
export function figuresFor(shoot: ShootTerms, picks: number): OrderFigures {
  let price;
  try {
    price = priceExtras({
      picks,
      allowance: shoot.allowance,
      unitPriceMinor: shoot.extra_price_minor,
      taxRateBp: shoot.tax_rate_bp,
      taxMode: shoot.tax_mode,
    });
  } catch (err) {
    if (err instanceof PricingInputError) throw new HttpError(422, 'This shoot’s price cannot be worked out. Please contact the studio.');
    throw err;
  }
  const figures: OrderFigures = {
    ...price,
    unitPriceMinor: shoot.extra_price_minor,
    currency: shoot.currency.trim().toUpperCase(),
    taxRateBp: shoot.tax_rate_bp,
    taxMode: shoot.tax_mode,
  };
  for (const v of [figures.unitPriceMinor, figures.netMinor, figures.taxMinor, figures.totalMinor]) {
    if (v > MAX_MINOR) {
      throw new HttpError(422, 'The total is too large for one payment. Please contact the studio.');
    }
  }
  return figures;
}

function sameFigures(o: OrderRow, f: OrderFigures): boolean {
  return (
    o.extras === f.extras &&
    o.unit_price_minor === f.unitPriceMinor &&
    o.net_minor === f.netMinor &&
    o.tax_minor === f.taxMinor &&
    o.total_minor === f.totalMinor &&
    o.currency.trim() === f.currency &&
    o.tax_rate_bp === f.taxRateBp &&
    o.tax_mode === f.taxMode
  );
}

/** Picks that count: of frames the client can see (ready, not hidden), as the gallery counts them. */
async function countPicks(shootId: string, studioId: string, trx: Knex | Knex.Transaction = db()): Promise<number> {
  const row = await trx('picks as k')
    .join('frames as f', 'f.id', 'k.frame_id')
    .where({ 'k.shoot_id': shootId, 'k.studio_id': studioId, 'f.state': 'ready', 'f.hidden': false })
    .count<{ n: string }[]>('* as n')
    .first();
  return Number(row?.n ?? 0);
}

// ---------------------------------------------------------------------------------------------
// Talking to the provider

/** The provider's failure as an answer for the person waiting; the detail goes to the log. */
function providerFailure(err: unknown, context: string, unavailable: string): HttpError {
  if (err instanceof HttpError) return err;
  if (err instanceof CheckoutOrderError) {
    console.error(`[fillcard] ${context}:`, err.message);
    return new HttpError(422, 'This order cannot be paid by card as it stands. Please contact the studio.');
  }
  if (err instanceof Stripe.errors.StripeIdempotencyError) {
    console.error(`[fillcard] ${context}:`, err.message);
    return new HttpError(409, 'The payment page changed while it was being opened. Please try again.');
  }
  if (err instanceof Stripe.errors.StripeInvalidRequestError) {
    console.error(`[fillcard] ${context}: refused by the payment provider:`, err.message);
    return new HttpError(502, 'The payment provider refused this payment. Please contact the studio.');
  }
  console.error(`[fillcard] ${context}:`, err);
  return new HttpError(503, unavailable, { 'Retry-After': '60' });
}

const isNotOpen = (err: unknown) =>
  err instanceof Stripe.errors.StripeInvalidRequestError && err.code === 'checkout_session_not_open';

const isMissing = (err: unknown) =>
  err instanceof Stripe.errors.StripeInvalidRequestError && (err.code === 'resource_missing' || err.statusCode === 404);

function paymentIntentId(session: Stripe.Checkout.Session): string | null {
  const pi = session.payment_intent;
  if (!pi) return null;
  return typeof pi === 'string' ? pi : pi.id;
}

// ---------------------------------------------------------------------------------------------
// Settling: what the provider's record of a session means for our order

export type Settlement = 'paid' | 'expired' | 'unchanged' | 'unknown-order';

interface SettleOptions {
  /** Unlock the picks when the order expires (the client may change them); not while they retry. */
  unlock: boolean;
  /** Mail ids to dispatch once the transaction commits. */
  mail: string[];
}

/**
 * Applies the provider's record of a session to its order, inside `trx`. Idempotent: an order
 * moves pending → paid or pending → expired once; a paid or refunded order never goes back, and an
 * expired or failed order whose session turns out paid becomes paid, because the money was taken.
 */
export async function settleSession(
  trx: Knex.Transaction,
  session: Stripe.Checkout.Session,
  opts: SettleOptions,
): Promise<{ result: Settlement; orderId: string | null; studioId: string | null }> {
  const orderId = session.metadata?.order_id ?? session.client_reference_id ?? null;
  if (!isUuid(orderId)) return { result: 'unknown-order', orderId: null, studioId: null };
  const found = await trx<OrderRow>('orders').where({ id: orderId }).first('shoot_id', 'studio_id');
  if (!found) return { result: 'unknown-order', orderId: null, studioId: null };
  if (session.metadata?.studio_id && session.metadata.studio_id !== found.studio_id) {
    console.error(`[fillcard] session ${session.id} names order ${orderId} of another studio; ignored`);
    return { result: 'unknown-order', orderId: null, studioId: null };
  }

  const shoot = await trx('shoots').where({ id: found.shoot_id, studio_id: found.studio_id }).forUpdate().first();
  const order = await trx<OrderRow>('orders').where({ id: orderId, studio_id: found.studio_id }).forUpdate().first();
  if (!shoot || !order) return { result: 'unknown-order', orderId: null, studioId: null };
  if (order.checkout_session_id && order.checkout_session_id !== session.id) {
    console.error(`[fillcard] session ${session.id} does not belong to order ${order.id} (${order.checkout_session_id}); ignored`);
    return { result: 'unchanged', orderId: order.id, studioId: order.studio_id };
  }
  const same = { orderId: order.id, studioId: order.studio_id };

  if (session.status === 'complete' && session.payment_status === 'paid') {
    if (order.state === 'paid' || order.state === 'refunded') return { result: 'unchanged', ...same };
    if (session.amount_total !== order.total_minor || session.currency?.toUpperCase() !== order.currency.trim()) {
      // Cannot happen for a session we made; the money was taken all the same, so record it and say so.
      console.error(`[fillcard] order ${order.id} paid ${session.amount_total} ${session.currency}, expected ${order.total_minor} ${order.currency}`);
    }
    const [paid] = await trx<OrderRow>('orders')
      .where({ id: order.id })
      .update({
        state: 'paid',
        paid_at: trx.fn.now() as unknown as Date,
        payment_intent_id: paymentIntentId(session),
        checkout_session_id: session.id,
        checkout_url: null,
        failure: null,
        updated_at: trx.fn.now() as unknown as Date,
      })
      .returning('*');
    // The paid picks are final: the studio gets the pick list with the payment, the picks stay
    // locked, and the shoot moves on to retouching (never backwards).
    opts.mail.push(...(await completePicks(trx, shoot.id, { total: formatMoney(paid.total_minor, paid.currency.trim()), lines: receiptLines(paid) })));
    await trx('shoots')
      .where({ id: shoot.id })
      .update({
        picks_submitted_at: trx.raw('coalesce(picks_submitted_at, now())'),
        stage: trx.raw(`CASE WHEN stage IN ('proofing', 'picks_in') THEN 'retouching' ELSE stage END`),
        updated_at: trx.fn.now(),
      });
    await audit(
      {
        studioId: order.studio_id,
        actorKind: 'system',
        action: 'order.paid',
        subjectType: 'order',
        subjectId: order.id,
        details: { shootId: shoot.id, totalMinor: order.total_minor, currency: order.currency.trim(), amountCharged: session.amount_total },
      },
      trx,
    );
    opts.mail.push(...(await queuePaidMail(trx, paid)));
    return { result: 'paid', ...same };
  }

  if (session.status === 'expired') {
    if (order.state !== 'pending') return { result: 'unchanged', ...same };
    await trx('orders').where({ id: order.id }).update({ state: 'expired', checkout_url: null, updated_at: trx.fn.now() });
    if (opts.unlock) await unlockPicksIfFree(trx, shoot.id, order.id);
    await audit(
      { studioId: order.studio_id, actorKind: 'system', action: 'order.expired', subjectType: 'order', subjectId: order.id, details: { shootId: shoot.id } },
      trx,
    );
    return { result: 'expired', ...same };
  }

  return { result: 'unchanged', ...same };
}

/** The client may change picks again, unless another order still waits for or has their money. */
async function unlockPicksIfFree(trx: Knex.Transaction, shootId: string, exceptOrderId: string) {
  const busy = await trx('orders')
    .where({ shoot_id: shootId })
    .whereIn('state', ['pending', 'paid'])
    .whereNot({ id: exceptOrderId })
    .first('id');
  if (busy) return;
  await trx('shoots')
    .where({ id: shootId })
    .whereIn('stage', ['proofing', 'picks_in'])
    .update({ picks_submitted_at: null, stage: 'proofing', updated_at: trx.fn.now() });
}

// ---------------------------------------------------------------------------------------------
// Checkout

interface Prepared {
  order: OrderRow;
  /** The order's figures are what the picks cost now. */
  current: boolean;
}

/** Under the shoot's lock: checks the client may pay, and finds or makes the order to pay. */
async function prepareOrder(client: SessionClient): Promise<Prepared> {
  return db().transaction(async (trx) => {
    const shoot = await trx('shoots as s')
      .join('clients as c', 'c.id', 's.client_id')
      .where({ 's.id': client.shootId, 's.studio_id': client.studioId })
      .forUpdate('s')
      .first('s.*', 'c.email as client_email');
    if (!shoot) throw notFound('No such shoot.');
    const paid = await trx('orders').where({ shoot_id: shoot.id, state: 'paid' }).first('id');
    if (paid) throw conflict('Your extra retouches are already paid for.');
    if (!['proofing', 'picks_in'].includes(shoot.stage)) throw conflict('This shoot is no longer taking payments.');
    if (!shoot.picks_submitted_at) throw conflict('Send your picks first; then you can pay for the extra retouches.');
    const figures = figuresFor(shoot, await countPicks(shoot.id, shoot.studio_id, trx));
    if (figures.extras === 0) throw conflict('Your picks fit in your package: there is nothing to pay.');

    let pending = await trx<OrderRow>('orders').where({ shoot_id: shoot.id, state: 'pending' }).forUpdate().first();
    if (pending && !pending.checkout_session_id && !sameFigures(pending, figures)) {
      await failOrder(trx, pending, 'The price changed before the payment page opened.');
      pending = undefined;
    }
    if (pending) return { order: pending, current: sameFigures(pending, figures) };

    const last = await trx('orders').where({ shoot_id: shoot.id }).max<{ n: number | null }[]>('attempt as n').first();
    const [order] = await trx<OrderRow>('orders')
      .insert({
        studio_id: shoot.studio_id,
        shoot_id: shoot.id,
        attempt: (last?.n ?? 0) + 1,
        extras: figures.extras,
        unit_price_minor: figures.unitPriceMinor,
        net_minor: figures.netMinor,
        tax_minor: figures.taxMinor,
        total_minor: figures.totalMinor,
        currency: figures.currency,
        tax_rate_bp: figures.taxRateBp,
        tax_mode: figures.taxMode,
        state: 'pending',
        client_email: shoot.client_email,
      })
      .returning('*');
    return { order, current: true };
  });
}

async function failOrder(trx: Knex | Knex.Transaction, order: Pick<OrderRow, 'id' | 'studio_id' | 'shoot_id'>, why: string) {
  const n = await trx('orders')
    .where({ id: order.id, state: 'pending' })
    .update({ state: 'failed', failure: why.slice(0, 500), checkout_url: null, updated_at: trx.fn.now() });
  if (n) {
    await audit(
      { studioId: order.studio_id, actorKind: 'system', action: 'order.failed', subjectType: 'order', subjectId: order.id, details: { shootId: order.shoot_id, why } },
      trx,
    );
  }
}

/** Marks a waiting order expired without unlocking the picks (the client is paying again). */
async function closeLocally(order: Pick<OrderRow, 'id' | 'studio_id' | 'shoot_id'>, why: string) {
  await db().transaction(async (trx) => {
    const n = await trx('orders').where({ id: order.id, state: 'pending' }).update({ state: 'expired', checkout_url: null, updated_at: trx.fn.now() });
    if (n) {
      await audit(
        { studioId: order.studio_id, actorKind: 'system', action: 'order.expired', subjectType: 'order', subjectId: order.id, details: { shootId: order.shoot_id, why } },
        trx,
      );
    }
  });
}

/** Settles a session outside any caller's transaction and sends the mail it queued. */
async function settleNow(session: Stripe.Checkout.Session, unlock: boolean) {
  const mail: string[] = [];
  const outcome = await db().transaction((trx) => settleSession(trx, session, { unlock, mail }));
  await dispatchMail(mail);
  return outcome;
}

export interface CheckoutStart {
  url: string;
  orderId: string;
  reused: boolean;
}

/**
 * The payment page for the client's extra retouches: the open one of a waiting order, or a new
 * order and Checkout Session. If the provider cannot be reached the new order is marked failed, so
 * nothing waits for payment without a page to pay on.
 */
export async function startCheckout(client: SessionClient): Promise<CheckoutStart> {
  // A waiting order whose page has died or whose price is stale is closed, then the loop starts over.
  for (let round = 0; round < 3; round++) {
    const { order, current } = await prepareOrder(client);

    if (order.checkout_session_id) {
      let session: Stripe.Checkout.Session;
      try {
        session = await retrieveCheckoutSession(order.checkout_session_id);
      } catch (err) {
        if (!isMissing(err)) throw providerFailure(err, `checkout: re-reading ${order.checkout_session_id}`, PAYMENT_UNAVAILABLE);
        await failOrder(db(), order, 'The payment provider no longer knows this payment page.');
        continue;
      }
      if (session.status === 'open' && current && session.url) return { url: session.url, orderId: order.id, reused: true };
      if (session.status === 'complete') {
        await settleNow(session, false);
        throw conflict(session.payment_status === 'paid'
          ? 'Your extra retouches are already paid for.'
          : 'Your payment is still being processed. Please check again in a little while.');
      }
      if (session.status === 'open') {
        // The price changed while the page was open: close it, then make the new order. The order
        // is marked first, so the provider's expiry webhook finds nothing to do and leaves the picks
        // locked for the client who is about to pay.
        await closeLocally(order, 'The price changed while the payment page was open.');
        try {
          session = await stripe().checkout.sessions.expire(session.id);
        } catch (err) {
          if (!isNotOpen(err)) {
            await db()('orders').where({ id: order.id, state: 'expired' }).update({ state: 'pending', updated_at: db().fn.now() }).catch(() => undefined);
            throw providerFailure(err, `checkout: expiring ${session.id}`, PAYMENT_UNAVAILABLE);
          }
          session = await retrieveCheckoutSession(session.id).catch((e: unknown) => {
            throw providerFailure(e, `checkout: re-reading ${order.checkout_session_id}`, PAYMENT_UNAVAILABLE);
          });
        }
      }
      const settled = await settleNow(session, false);
      if (settled.result === 'paid') throw conflict('Your extra retouches are already paid for.');
      continue;
    }

    const shoot = await db()('shoots').where({ id: order.shoot_id, studio_id: order.studio_id }).first('title');
    const origin = config().PUBLIC_ORIGIN;
    const page = `${origin}/gallery/${order.shoot_id}/payment`;
    let created: { id: string; url: string };
    try {
      created = await createCheckoutSession({
        orderId: order.id,
        shootId: order.shoot_id,
        studioId: order.studio_id,
        clientEmail: order.client_email,
        extras: order.extras,
        unitPriceMinor: order.unit_price_minor,
        taxMinor: order.tax_minor,
        totalMinor: order.total_minor,
        taxMode: order.tax_mode,
        currency: order.currency.trim(),
        description: `For “${shoot?.title ?? 'your shoot'}”`,
        // The provider puts the session's id in place of the literal {CHECKOUT_SESSION_ID}.
        successUrl: `${page}?session={CHECKOUT_SESSION_ID}`,
        cancelUrl: `${page}?cancelled=1`,
      });
    } catch (err) {
      const failure = providerFailure(err, `checkout: creating the session for order ${order.id}`, PAYMENT_UNAVAILABLE);
      await failOrder(db(), order, failure.message);
      throw failure;
    }
    const stored = await db()('orders')
      .where({ id: order.id, state: 'pending' })
      .where((q) => q.whereNull('checkout_session_id').orWhere({ checkout_session_id: created.id }))
      .update({ checkout_session_id: created.id, checkout_url: created.url, updated_at: db().fn.now() });
    if (!stored) throw new HttpError(409, 'The payment page changed while it was being opened. Please try again.');
    return { url: created.url, orderId: order.id, reused: false };
  }
  throw new HttpError(409, 'The payment page changed while it was being opened. Please try again.');
}

/**
 * "Change my picks" from the return page: closes the waiting payment page at the provider, then
 * unlocks the picks. Refused once the money is in.
 */
export async function releaseCheckout(client: SessionClient): Promise<void> {
  const pending = await db()<OrderRow>('orders').where({ shoot_id: client.shootId, studio_id: client.studioId, state: 'pending' }).first();
  if (pending?.checkout_session_id) {
    let session: Stripe.Checkout.Session;
    try {
      session = await retrieveCheckoutSession(pending.checkout_session_id);
      if (session.status === 'open') session = await stripe().checkout.sessions.expire(session.id);
    } catch (err) {
      if (!isNotOpen(err)) throw providerFailure(err, `release: closing ${pending.checkout_session_id}`, PAYMENT_UNAVAILABLE);
      session = await retrieveCheckoutSession(pending.checkout_session_id).catch((e: unknown) => {
        throw providerFailure(e, `release: re-reading ${pending.checkout_session_id}`, PAYMENT_UNAVAILABLE);
      });
    }
    const settled = await settleNow(session, true);
    if (settled.result === 'paid' || session.status === 'complete') throw conflict('Your extra retouches are already paid for, so your picks stay as they are.');
    return;
  }
  await db().transaction(async (trx) => {
    const shoot = await trx('shoots').where({ id: client.shootId, studio_id: client.studioId }).forUpdate().first();
    if (!shoot) throw notFound('No such shoot.');
    if (pending) await failOrder(trx, pending, 'The client chose to change their picks.');
    const paid = await trx('orders').where({ shoot_id: shoot.id }).where({ state: 'paid' }).first('id');
    if (paid) throw conflict('Your extra retouches are already paid for, so your picks stay as they are.');
    // Only picks held back for payment are this module's to unlock; picks that went to the studio
    // without extras are reopened by the studio.
    const extras = figuresFor(shoot, await countPicks(shoot.id, shoot.studio_id, trx)).extras;
    if (extras === 0 || shoot.stage !== 'proofing') throw conflict('Your picks are with the studio; ask them to reopen the picks if you want to change them.');
    await trx('shoots')
      .where({ id: shoot.id })
      .whereIn('stage', ['proofing', 'picks_in'])
      .update({ picks_submitted_at: null, stage: 'proofing', updated_at: trx.fn.now() });
  });
}

// ---------------------------------------------------------------------------------------------
// What the client sees after paying

export interface PaymentView {
  order: OrderDto | null;
  /** The picks are locked (sent); a client can change them only when they are not. */
  picksLocked: boolean;
  /** What paying now would cost, when the client has extras and no paid order. */
  due: OrderFigures | null;
}

/**
 * The order a return to the payment page is about: the one of `sessionId` when given (the success
 * return), else the shoot's latest. Reads only; the return never changes an order.
 */
export async function paymentView(client: SessionClient, sessionId: string | null): Promise<PaymentView> {
  const shoot = await db()('shoots').where({ id: client.shootId, studio_id: client.studioId }).first();
  if (!shoot) throw notFound('No such shoot.');
  const q = db()<OrderRow>('orders').where({ shoot_id: shoot.id, studio_id: shoot.studio_id });
  const order = sessionId
    ? await q.clone().where({ checkout_session_id: sessionId }).first()
    : ((await q.clone().where({ state: 'paid' }).orderBy('created_at', 'desc').first()) ??
      (await q.clone().orderBy('created_at', 'desc').first()));
  let due: OrderFigures | null = null;
  if (['proofing', 'picks_in'].includes(shoot.stage)) {
    try {
      const f = figuresFor(shoot, await countPicks(shoot.id, shoot.studio_id));
      if (f.extras > 0) due = f;
    } catch {
      due = null;
    }
  }
  return { order: order ? toOrderDto(order) : null, picksLocked: !!shoot.picks_submitted_at, due };
}

// ---------------------------------------------------------------------------------------------
// Webhooks

/** The events whose session is re-read and settled; any other type is stored and left alone. */
const SESSION_EVENTS = new Set([
  'checkout.session.completed',
  'checkout.session.expired',
  'checkout.session.async_payment_succeeded',
  'checkout.session.async_payment_failed',
]);

export type WebhookOutcome = { received: true; duplicate?: true; ignored?: true; settlement?: Settlement };

/**
 * A webhook from the provider: verified on the raw body, stored once by event id, and settled from
 * the provider's current record of the session (never from the event's copy, which may be stale or
 * arrive out of order). Throws WebhookRejected (400) for a bad signature; a 503 while the provider
 * cannot be asked, so it sends the event again later.
 */
export async function receiveWebhook(rawBody: string, signature: string | null): Promise<WebhookOutcome> {
  const event = verifyWebhook(rawBody, signature);
  const seen = await db()('payment_events').where({ provider_event_id: event.id }).first('id');
  if (seen) return { received: true, duplicate: true };

  let session: Stripe.Checkout.Session | null = null;
  if (SESSION_EVENTS.has(event.type)) {
    const id = (event.data.object as { id?: unknown }).id;
    if (typeof id === 'string') {
      try {
        session = await retrieveCheckoutSession(id);
      } catch (err) {
        if (!isMissing(err)) throw providerFailure(err, `webhook ${event.id}: re-reading ${id}`, 'The payment provider cannot be reached; send the event again later.');
        console.error(`[fillcard] webhook ${event.id}: session ${id} is unknown to the provider; stored and ignored`);
      }
    }
  }

  const mail: string[] = [];
  const outcome = await db().transaction(async (trx): Promise<WebhookOutcome> => {
    const inserted = await trx('payment_events')
      .insert({ provider_event_id: event.id, type: event.type, payload: rawBody })
      .onConflict('provider_event_id')
      .ignore()
      .returning('id');
    // Another delivery of the same event got here first and has done (or is doing) the work.
    if (inserted.length === 0) return { received: true, duplicate: true };
    let settled: Awaited<ReturnType<typeof settleSession>> | null = null;
    if (session) settled = await settleSession(trx, session, { unlock: true, mail });
    await trx('payment_events')
      .where({ id: inserted[0].id })
      .update({ order_id: settled?.orderId ?? null, studio_id: settled?.studioId ?? null, processed_at: trx.fn.now() });
    return settled ? { received: true, settlement: settled.result } : { received: true, ignored: true };
  });
  await dispatchMail(mail);
  return outcome;
}

// ---------------------------------------------------------------------------------------------
// Refunds

/** Refunds a paid order in full through the provider, then records it. Owners only (checked by the route). */
export async function refundOrder(member: SessionMember, orderId: string): Promise<OrderDto> {
  if (!isUuid(orderId)) throw notFound('No such order.');
  const order = await db()<OrderRow>('orders').where({ id: orderId, studio_id: member.studioId }).first();
  if (!order) throw notFound('No such order.');
  if (order.state === 'refunded') throw conflict('This order has already been refunded.');
  if (order.state !== 'paid') throw conflict('Only a paid order can be refunded.');
  if (!order.payment_intent_id) throw conflict('This order has no payment to refund.');

  let refund: Stripe.Refund;
  try {
    refund = await refundPayment(order.payment_intent_id);
  } catch (err) {
    throw providerFailure(err, `refund of order ${order.id}`, REFUND_UNAVAILABLE);
  }
  const mail: string[] = [];
  const row = await db().transaction(async (trx) => {
    const [updated] = await trx<OrderRow>('orders')
      .where({ id: order.id, studio_id: member.studioId, state: 'paid' })
      .update({
        state: 'refunded',
        refunded_at: trx.fn.now() as unknown as Date,
        refund_id: refund.id,
        refunded_minor: Math.min(refund.amount, order.total_minor),
        updated_at: trx.fn.now() as unknown as Date,
      })
      .returning('*');
    // A doubled click: the provider answered the same refund (same idempotency key); one record is enough.
    if (!updated) return trx<OrderRow>('orders').where({ id: order.id }).first() as Promise<OrderRow>;
    await audit(
      {
        studioId: member.studioId,
        actorKind: 'member',
        actorId: member.userId,
        action: 'order.refunded',
        subjectType: 'order',
        subjectId: order.id,
        details: { shootId: order.shoot_id, amountMinor: refund.amount, currency: order.currency.trim() },
      },
      trx,
    );
    mail.push(...(await queueRefundMail(trx, updated)));
    return updated;
  });
  await dispatchMail(mail);
  return toOrderDto(row);
}

// ---------------------------------------------------------------------------------------------
// Lists for the studio

export async function listShootOrders(shootId: string, studioId: string): Promise<OrderDto[]> {
  const rows = await db()<OrderRow>('orders').where({ shoot_id: shootId, studio_id: studioId }).orderBy('created_at', 'desc');
  return rows.map(toOrderDto);
}

export interface StudioOrderDto extends OrderDto {
  shootId: string;
  shootTitle: string;
  clientName: string;
}

export async function listStudioOrders(studioId: string, limit = 50): Promise<StudioOrderDto[]> {
  const rows = await db()('orders as o')
    .join('shoots as s', 's.id', 'o.shoot_id')
    .join('clients as c', 'c.id', 's.client_id')
    .where({ 'o.studio_id': studioId })
    .whereNot({ 'o.state': 'failed' })
    .orderBy('o.created_at', 'desc')
    .limit(Math.min(Math.max(limit, 1), 500))
    .select('o.*', 's.title as shoot_title', 'c.name as client_name');
  return rows.map((r: OrderRow & { shoot_title: string; client_name: string }) => ({
    ...toOrderDto(r),
    shootId: r.shoot_id,
    shootTitle: r.shoot_title,
    clientName: r.client_name,
  }));
}

// ---------------------------------------------------------------------------------------------
// E-mails

const retouches = (n: number) => `${n} extra retouch${n === 1 ? '' : 'es'}`;
const percent = (bp: number) => `${(bp / 100).toLocaleString('en-GB', { maximumFractionDigits: 2 })} %`;
const when = (d: Date | string) =>
  `${new Date(d).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short', timeZone: 'UTC' })} UTC`;

/** The lines of a receipt: what was bought, net, tax and total, in the order's own currency. */
export function receiptLines(o: Pick<OrderRow, 'extras' | 'unit_price_minor' | 'net_minor' | 'tax_minor' | 'total_minor' | 'currency' | 'tax_rate_bp' | 'tax_mode'>): string[] {
  const cur = o.currency.trim();
  const money = (m: number) => formatMoney(m, cur);
  const taxLabel = o.tax_mode === 'inclusive' ? `Tax included (${percent(o.tax_rate_bp)})` : `Tax (${percent(o.tax_rate_bp)})`;
  return [
    `Extra retouches: ${o.extras} × ${money(o.unit_price_minor)}`,
    `Net: ${money(o.net_minor)}`,
    `${taxLabel}: ${money(o.tax_minor)}`,
    `Total paid: ${money(o.total_minor)}`,
  ];
}

async function mailContext(trx: Knex.Transaction, order: OrderRow) {
  const shoot = await trx('shoots as s')
    .join('clients as c', 'c.id', 's.client_id')
    .join('studios as st', 'st.id', 's.studio_id')
    .where({ 's.id': order.shoot_id, 's.studio_id': order.studio_id })
    .first('s.id', 's.title', 'c.name as client_name', 'c.email as client_email', 'st.name as studio_name', 'st.brand_colour', 'st.contact_email');
  return shoot as { id: string; title: string; client_name: string; client_email: string; studio_name: string; brand_colour: string; contact_email: string | null };
}

/** The client's receipt for a paid order. */
async function queuePaidMail(trx: Knex.Transaction, order: OrderRow): Promise<string[]> {
  const s = await mailContext(trx, order);
  const total = formatMoney(order.total_minor, order.currency.trim());
  const ids: string[] = [];
  const to = order.client_email ?? s.client_email;
  if (to) {
    const receipt = renderMail({
      studioName: s.studio_name,
      brandColour: s.brand_colour,
      heading: 'Thank you — payment received',
      paragraphs: [
        `${s.studio_name} has received your payment for ${retouches(order.extras)} for “${s.title}”. Your retouches are on their way.`,
        receiptLines(order).join('\n'),
        `Paid on ${when(order.paid_at ?? new Date())}. Reference ${order.id.slice(0, 8).toUpperCase()}.`,
        `Keep this e-mail as your receipt. If you need a tax invoice, ask ${s.studio_name}${s.contact_email ? ` (${s.contact_email})` : ''}.`,
      ],
    });
    ids.push(await queueMail({ to, studioId: order.studio_id, subject: `Receipt: ${total} for ${retouches(order.extras)} — ${s.studio_name}`, ...receipt }, trx));
  }
  // The studio hears of the payment in the picks e-mail that goes out with it.
  return ids;
}

async function queueRefundMail(trx: Knex.Transaction, order: OrderRow): Promise<string[]> {
  const s = await mailContext(trx, order);
  const to = order.client_email ?? s.client_email;
  if (!to) return [];
  const amount = formatMoney(order.refunded_minor, order.currency.trim());
  const body = renderMail({
    studioName: s.studio_name,
    brandColour: s.brand_colour,
    heading: 'Your payment has been refunded',
    paragraphs: [
      `${s.studio_name} has refunded ${amount} for the extra retouches on “${s.title}”.`,
      'Refunds usually reach the card they were paid with within a few working days, depending on your bank.',
      `Reference ${order.id.slice(0, 8).toUpperCase()}.`,
    ],
  });
  return [await queueMail({ to, studioId: order.studio_id, subject: `Refund: ${amount} — ${s.studio_name}`, ...body }, trx)];
}
