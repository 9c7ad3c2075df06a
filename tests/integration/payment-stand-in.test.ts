/**
 * The payment stand-in driven by the official `stripe` SDK, as the app drives it: sessions,
 * idempotency, expiry, the test payment page, signed webhooks (checked with the SDK's own
 * verifier), retries and re-delivery, refunds, authentication errors and a restart with saved state.
 * The stand-in runs as a child process on a free port; a small HTTP receiver stands for the app's
 * webhook endpoint.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { mkdtempSync, rmSync } from 'node:fs';
import Stripe from 'stripe';
import { priceExtras } from '@/lib/pricing';
import { formatMoney } from '@/lib/currency';
import {
  checkoutLineItems,
  CheckoutOrderError,
  createCheckoutSession,
  refundPayment,
  retrieveCheckoutSession,
  stripeClientOptions,
  verifyWebhook,
  WebhookRejected,
  type CheckoutOrder,
} from '@/lib/server/payments';

const root = path.resolve(import.meta.dirname, '../..');
const KEY = 'sk_test_stand_in_suite_key';
const SECRET = 'whsec_stand_in_suite_secret';

/** Polls until `check` returns a value; a wait for something to happen, not a timing assertion. */
async function waitFor<T>(what: string, check: () => T | undefined | false, limitMs = 20_000): Promise<T> {
  const until = Date.now() + limitMs;
  for (;;) {
    const value = check();
    if (value) return value;
    if (Date.now() > until) throw new Error(`gave up waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

// ---------------------------------------------------------------------------------------------
// The app's webhook endpoint, stood in for by a recorder that can be told to fail.

interface Received {
  path: string;
  signature: string | null;
  body: string;
}

class Receiver {
  received: Received[] = [];
  attempts = 0;
  failNext = 0;
  private server = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      this.attempts++;
      if (this.failNext > 0) {
        this.failNext--;
        res.writeHead(500).end('failing on purpose');
        return;
      }
      this.received.push({
        path: req.url ?? '',
        signature: (req.headers['stripe-signature'] as string | undefined) ?? null,
        body: Buffer.concat(chunks).toString('utf8'),
      });
      res.writeHead(200, { 'content-type': 'application/json' }).end('{"received":true}');
    });
  });
  origin = '';

  async start() {
    await new Promise<void>((resolve) => this.server.listen(0, '127.0.0.1', resolve));
    const address = this.server.address();
    if (!address || typeof address === 'string') throw new Error('receiver has no port');
    this.origin = `http://127.0.0.1:${address.port}`;
  }

  stop() {
    this.server.closeAllConnections();
    return new Promise<void>((resolve) => this.server.close(() => resolve()));
  }

  eventsOf(sessionId: string, type: string): Received[] {
    return this.received.filter((r) => {
      const e = JSON.parse(r.body) as { type: string; data: { object: { id: string } } };
      return e.type === type && e.data.object.id === sessionId;
    });
  }
}

// ---------------------------------------------------------------------------------------------
// The stand-in as a child process.

interface StandIn {
  child: ChildProcess;
  base: string;
  port: number;
  output: string[];
  stop(): Promise<number | null>;
}

async function startStandIn(env: Record<string, string>): Promise<StandIn> {
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(root, 'scripts/stand-ins/payments.ts')], {
    cwd: root,
    env: { ...process.env, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  const output: string[] = [];
  child.stderr!.on('data', (d: Buffer) => output.push(d.toString()));
  const port = await new Promise<number>((resolve, reject) => {
    let buffered = '';
    child.stdout!.on('data', (d: Buffer) => {
      output.push(d.toString());
      buffered += d.toString();
      const m = /ready on http:\/\/127\.0\.0\.1:(\d+)/.exec(buffered);
      if (m) resolve(Number(m[1]));
    });
    child.on('exit', (code) => reject(new Error(`stand-in exited (${code}) before it was ready:\n${output.join('')}`)));
  });
  return {
    child,
    port,
    base: `http://127.0.0.1:${port}`,
    output,
    stop() {
      if (child.exitCode !== null) return Promise.resolve(child.exitCode);
      return new Promise((resolve) => {
        child.once('exit', (code) => resolve(code));
        child.kill('SIGTERM');
      });
    },
  };
}

function sdkFor(standIn: StandIn, key = KEY) {
  return new Stripe(key, { host: '127.0.0.1', port: standIn.port, protocol: 'http', maxNetworkRetries: 0 });
}

// ---------------------------------------------------------------------------------------------

describe('checkoutLineItems', () => {
  it('tax exclusive: extras at the unit price plus one tax line, summing to the order total', () => {
    // 12 picks, 10 included, €25.00 each, 19 % on top: net 5000, tax 950, total 5950 (worked in pricing tests)
    const price = priceExtras({ picks: 12, allowance: 10, unitPriceMinor: 2500, taxRateBp: 1900, taxMode: 'exclusive' });
    const items = checkoutLineItems({ ...price, unitPriceMinor: 2500, taxMode: 'exclusive', currency: 'EUR', description: 'Spring portraits' });
    expect(items).toEqual([
      { quantity: 2, price_data: { currency: 'eur', unit_amount: 2500, product_data: { name: 'Extra retouch', description: 'Spring portraits' } } },
      { quantity: 1, price_data: { currency: 'eur', unit_amount: 950, product_data: { name: 'Tax' } } },
    ]);
    const sum = items.reduce((s, i) => s + i.quantity! * i.price_data!.unit_amount!, 0);
    expect(sum).toBe(price.totalMinor);
  });

  it('tax inclusive: only the extras, since the unit price holds the tax', () => {
    // 3 extras × €25.00 = €75.00, of which tax 1250 at 20 % (worked in pricing tests)
    const price = priceExtras({ picks: 13, allowance: 10, unitPriceMinor: 2500, taxRateBp: 2000, taxMode: 'inclusive' });
    const items = checkoutLineItems({ ...price, unitPriceMinor: 2500, taxMode: 'inclusive', currency: 'eur' });
    expect(items).toEqual([{ quantity: 3, price_data: { currency: 'eur', unit_amount: 2500, product_data: { name: 'Extra retouch' } } }]);
    expect(items[0].quantity! * items[0].price_data!.unit_amount!).toBe(price.totalMinor);
  });

  it('no tax line when the tax is zero', () => {
    const items = checkoutLineItems({ extras: 2, unitPriceMinor: 3000, taxMinor: 0, totalMinor: 6000, taxMode: 'exclusive', currency: 'JPY' });
    expect(items.map((i) => i.price_data!.product_data!.name)).toEqual(['Extra retouch']);
    expect(items[0].price_data!.currency).toBe('jpy');
  });

  it('refuses figures that do not add up, nothing to pay, and currencies the provider counts differently', () => {
    const good: CheckoutOrder = { extras: 2, unitPriceMinor: 2500, taxMinor: 950, totalMinor: 5950, taxMode: 'exclusive', currency: 'EUR' };
    expect(() => checkoutLineItems({ ...good, totalMinor: 5951 })).toThrow(CheckoutOrderError);
    expect(() => checkoutLineItems({ ...good, taxMode: 'inclusive' })).toThrow(/do not add up/);
    expect(() => checkoutLineItems({ ...good, extras: 0, totalMinor: 950 })).toThrow(CheckoutOrderError);
    expect(() => checkoutLineItems({ ...good, extras: 1.5 })).toThrow(CheckoutOrderError);
    expect(() => checkoutLineItems({ extras: 1, unitPriceMinor: 0, taxMinor: 0, totalMinor: 0, taxMode: 'exclusive', currency: 'EUR' })).toThrow(CheckoutOrderError);
    expect(() => checkoutLineItems({ ...good, currency: 'ISK' })).toThrow(/not supported/);
    // 14 963 fils does not end in 0, which the provider requires of three-decimal currencies
    expect(() => checkoutLineItems({ extras: 2, unitPriceMinor: 7125, taxMinor: 713, totalMinor: 14963, taxMode: 'exclusive', currency: 'KWD' })).toThrow(/end in 0/);
    expect(() => checkoutLineItems({ ...good, currency: 'ZZZ' })).toThrow(/Unknown currency/);
  });
});

describe('stripeClientOptions', () => {
  it('points the SDK at STRIPE_API_BASE when set, and at the real API otherwise', () => {
    expect(stripeClientOptions({ STRIPE_API_BASE: 'http://127.0.0.1:12111' })).toMatchObject({ host: '127.0.0.1', port: 12111, protocol: 'http' });
    const real = stripeClientOptions({ STRIPE_API_BASE: undefined });
    expect(real.host).toBeUndefined();
    expect(real.port).toBeUndefined();
    expect(real.protocol).toBeUndefined();
    expect(() => stripeClientOptions({ STRIPE_API_BASE: 'http://127.0.0.1:12111/v1' })).toThrow(/origin/);
  });
});

describe('payment stand-in with the official stripe SDK', () => {
  const receiver = new Receiver();
  let standIn: StandIn;
  let sdk: Stripe;
  let stateDir: string;
  const touched = ['STRIPE_API_BASE', 'STRIPE_SECRET_KEY', 'STRIPE_WEBHOOK_SECRET'] as const;
  const savedEnv = Object.fromEntries(touched.map((k) => [k, process.env[k]]));

  const order = (orderId: string) => {
    const price = priceExtras({ picks: 12, allowance: 10, unitPriceMinor: 2500, taxRateBp: 1900, taxMode: 'exclusive' });
    return {
      ...price,
      unitPriceMinor: 2500,
      taxMode: 'exclusive' as const,
      currency: 'EUR',
      orderId,
      shootId: 'shoot-0001',
      studioId: 'studio-0001',
      clientEmail: 'client@example.test',
      successUrl: `${receiver.origin}/paid?session={CHECKOUT_SESSION_ID}`,
      cancelUrl: `${receiver.origin}/not-paid`,
      description: 'Spring portraits, 12 frames picked',
    };
  };

  async function payOrDecline(url: string, choice: 'pay' | 'decline') {
    const page = await fetch(url);
    expect(page.status).toBe(200);
    const html = await page.text();
    // Post exactly the form the page shows.
    const form = /<form method="post" action="([^"]+)">/.exec(html);
    expect(form).not.toBeNull();
    expect(html).toContain(`name="action" value="${choice}"`);
    return fetch(new URL(form![1], url), {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ action: choice }).toString(),
      redirect: 'manual',
    });
  }

  /** The stand-in's settings for these tests; its state file survives a restart. */
  function standInEnv(): Record<string, string> {
    return {
      PAYMENTS_PORT: '0',
      STRIPE_SECRET_KEY: KEY,
      STRIPE_WEBHOOK_SECRET: SECRET,
      PUBLIC_ORIGIN: receiver.origin,
      PAYMENTS_WEBHOOK_URL: '',
      PAYMENTS_PUBLIC_URL: '',
      PAYMENTS_STATE_FILE: path.join(stateDir, 'state.json'),
    };
  }

  beforeAll(async () => {
    await receiver.start();
    stateDir = mkdtempSync(path.join(os.tmpdir(), 'fillcard-payments-'));
    standIn = await startStandIn({ ...standInEnv(), PAYMENTS_WEBHOOK_ATTEMPTS: '4', PAYMENTS_WEBHOOK_BACKOFF_MS: '20' });
    // The app's payments module reads these on first use.
    process.env.STRIPE_API_BASE = standIn.base;
    process.env.STRIPE_SECRET_KEY = KEY;
    process.env.STRIPE_WEBHOOK_SECRET = SECRET;
    sdk = sdkFor(standIn);
  });

  afterAll(async () => {
    await standIn?.stop();
    await receiver.stop();
    rmSync(stateDir, { recursive: true, force: true });
    for (const k of touched) {
      if (savedEnv[k] === undefined) delete process.env[k];
      else process.env[k] = savedEnv[k];
    }
  });

  it('answers its health check', async () => {
    const health = (await (await fetch(`${standIn.base}/__health`)).json()) as { ok: boolean; webhook_url: string };
    expect(health.ok).toBe(true);
    expect(health.webhook_url).toBe(`${receiver.origin}/api/payments/webhook`);
  });

  it('creates a session whose total is the order total, and the same idempotency key gives the same session', async () => {
    const o = order('order-create-1');
    const first = await createCheckoutSession(o);
    const again = await createCheckoutSession(o);
    expect(first.id).toMatch(/^cs_test_/);
    expect(again.id).toBe(first.id);
    expect(first.url).toBe(`${standIn.base}/pay/${first.id}`);

    const session = await retrieveCheckoutSession(first.id);
    expect(session).toMatchObject({
      id: first.id,
      object: 'checkout.session',
      amount_total: 5950,
      currency: 'eur',
      status: 'open',
      payment_status: 'unpaid',
      mode: 'payment',
      payment_intent: null,
      client_reference_id: 'order-create-1',
      customer_email: 'client@example.test',
      metadata: { order_id: 'order-create-1', shoot_id: 'shoot-0001', studio_id: 'studio-0001' },
    });
    expect(session.amount_total).toBe(o.totalMinor);

    const items = await sdk.checkout.sessions.listLineItems(first.id);
    expect(items.data.map((i) => [i.description, i.quantity, i.amount_total])).toEqual([
      ['Extra retouch', 2, 5000],
      ['Tax', 1, 950],
    ]);
  });

  it('a tax-inclusive order charges exactly its total with one line', async () => {
    const price = priceExtras({ picks: 13, allowance: 10, unitPriceMinor: 2500, taxRateBp: 2000, taxMode: 'inclusive' });
    const { id } = await createCheckoutSession({ ...order('order-inclusive-1'), ...price, taxMode: 'inclusive' });
    const session = await sdk.checkout.sessions.retrieve(id, { expand: ['line_items'] });
    expect(session.amount_total).toBe(7500);
    expect(session.line_items?.data).toHaveLength(1);
  });

  it('refuses an idempotency key reused with different parameters', async () => {
    const params: Stripe.Checkout.SessionCreateParams = {
      mode: 'payment',
      line_items: checkoutLineItems({ extras: 1, unitPriceMinor: 1000, taxMinor: 0, totalMinor: 1000, taxMode: 'exclusive', currency: 'USD' }),
      success_url: `${receiver.origin}/paid`,
    };
    await sdk.checkout.sessions.create(params, { idempotencyKey: 'reuse-1' });
    const err = await sdk.checkout.sessions
      .create({ ...params, success_url: `${receiver.origin}/elsewhere` }, { idempotencyKey: 'reuse-1' })
      .catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeIdempotencyError);
  });

  it('answers bad requests with Stripe-style errors the SDK raises as invalid-request errors', async () => {
    const missing = await sdk.checkout.sessions.create({ mode: 'payment', success_url: `${receiver.origin}/x` }).catch((e: unknown) => e);
    expect(missing).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((missing as Stripe.errors.StripeError).statusCode).toBe(400);
    expect((missing as Stripe.errors.StripeError).param).toBe('line_items');

    const unknown = await sdk.checkout.sessions
      .create({ mode: 'payment', success_url: `${receiver.origin}/x`, line_items: [], colour: 'red' } as unknown as Stripe.Checkout.SessionCreateParams)
      .catch((e: unknown) => e);
    expect((unknown as Stripe.errors.StripeError).message).toMatch(/unknown parameter: colour/);

    const nothing = await sdk.checkout.sessions.retrieve('cs_test_does_not_exist').catch((e: unknown) => e);
    expect(nothing).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((nothing as Stripe.errors.StripeError).statusCode).toBe(404);
    expect((nothing as Stripe.errors.StripeError).code).toBe('resource_missing');

    const raw = await fetch(`${standIn.base}/v1/checkout/sessions/cs_test_does_not_exist`, { headers: { authorization: `Bearer ${KEY}` } });
    expect(raw.status).toBe(404);
    expect(await raw.json()).toMatchObject({ error: { type: 'invalid_request_error', message: expect.stringContaining('No such checkout.session') } });
  });

  it('a wrong API key is refused with 401, which the SDK raises as an authentication error', async () => {
    const err = await sdkFor(standIn, 'sk_test_not_the_right_key').checkout.sessions.retrieve('cs_test_x').catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeAuthenticationError);
    expect((err as Stripe.errors.StripeError).statusCode).toBe(401);
    const none = await fetch(`${standIn.base}/v1/refunds/re_x`);
    expect(none.status).toBe(401);
  });

  it('expires an open session, posts checkout.session.expired, and refuses to expire it twice', async () => {
    const { id } = await createCheckoutSession(order('order-expire-1'));
    const expired = await sdk.checkout.sessions.expire(id);
    expect(expired.status).toBe('expired');
    expect(expired.url).toBeNull();
    const [delivery] = await waitFor('the expired event', () => {
      const got = receiver.eventsOf(id, 'checkout.session.expired');
      return got.length > 0 && got;
    });
    const event = Stripe.webhooks.constructEvent(delivery.body, delivery.signature!, SECRET);
    expect(event.type).toBe('checkout.session.expired');

    const again = await sdk.checkout.sessions.expire(id).catch((e: unknown) => e);
    expect(again).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    const page = await fetch(`${standIn.base}/pay/${id}`);
    expect(await page.text()).toContain('This payment link has expired');
  });

  let paidSessionId = '';
  let paidIntent = '';
  let completedEventId = '';

  it('the pay page is plainly a test page showing the amount and the line item', async () => {
    const { id, url } = await createCheckoutSession(order('order-pay-1'));
    paidSessionId = id;
    const html = await (await fetch(url)).text();
    expect(html).toContain('Test payment — no real money moves');
    expect(html).toContain(formatMoney(5950, 'EUR'));
    expect(html).toContain('Extra retouch');
    expect(html).toContain('Spring portraits, 12 frames picked');
    expect(html).toContain('value="pay"');
    expect(html).toContain('value="decline"');
  });

  it('Pay completes the session, posts a signed checkout.session.completed and returns the browser to success_url', async () => {
    const res = await payOrDecline(`${standIn.base}/pay/${paidSessionId}`, 'pay');
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe(`${receiver.origin}/paid?session=${paidSessionId}`);

    const [delivery] = await waitFor('the completed event', () => {
      const got = receiver.eventsOf(paidSessionId, 'checkout.session.completed');
      return got.length > 0 && got;
    });
    expect(delivery.path).toBe('/api/payments/webhook');
    // Verified with the SDK's own verifier and the shared secret.
    const event = Stripe.webhooks.constructEvent(delivery.body, delivery.signature!, SECRET);
    expect(event.object).toBe('event');
    expect(event.id).toMatch(/^evt_/);
    expect(event.type).toBe('checkout.session.completed');
    const session = event.data.object as Stripe.Checkout.Session;
    expect(session).toMatchObject({
      id: paidSessionId,
      status: 'complete',
      payment_status: 'paid',
      amount_total: 5950,
      metadata: { order_id: 'order-pay-1', shoot_id: 'shoot-0001', studio_id: 'studio-0001' },
    });
    expect(session.payment_intent).toMatch(/^pi_test_/);
    paidIntent = session.payment_intent as string;
    completedEventId = event.id;

    // The app's own verifier accepts it too.
    expect(verifyWebhook(delivery.body, delivery.signature).id).toBe(event.id);

    const retrieved = await retrieveCheckoutSession(paidSessionId);
    expect(retrieved.status).toBe('complete');
    expect(retrieved.payment_intent).toBe(paidIntent);

    // A second Pay on a finished session changes nothing.
    const again = await fetch(`${standIn.base}/pay/${paidSessionId}`, {
      method: 'POST',
      body: new URLSearchParams({ action: 'pay' }),
      redirect: 'manual',
    });
    expect(again.status).toBe(409);
  });

  it('a signature made with another secret, a changed body or no header is refused', async () => {
    const [delivery] = receiver.eventsOf(paidSessionId, 'checkout.session.completed');
    expect(delivery).toBeDefined();
    expect(() => Stripe.webhooks.constructEvent(delivery.body, delivery.signature!, 'whsec_some_other_secret')).toThrow(
      Stripe.errors.StripeSignatureVerificationError,
    );
    const tampered = delivery.body.replace('"amount_total": 5950', '"amount_total": 1');
    expect(tampered).not.toBe(delivery.body);
    expect(() => verifyWebhook(tampered, delivery.signature)).toThrow(WebhookRejected);
    try {
      verifyWebhook(tampered, delivery.signature);
    } catch (err) {
      expect((err as WebhookRejected).reason).toBe('bad_signature');
      expect((err as WebhookRejected).status).toBe(400);
    }
    expect(() => verifyWebhook(delivery.body, null)).toThrow(/Stripe-Signature header is missing/);
  });

  it('re-delivers the same event on request, byte for byte, for duplicate-delivery tests', async () => {
    const before = receiver.eventsOf(paidSessionId, 'checkout.session.completed');
    const res = await fetch(`${standIn.base}/__resend/${completedEventId}`, { method: 'POST' });
    expect(res.status).toBe(200);
    expect(((await res.json()) as { delivered: boolean }).delivered).toBe(true);
    const after = await waitFor('the re-delivery', () => {
      const got = receiver.eventsOf(paidSessionId, 'checkout.session.completed');
      return got.length > before.length && got;
    });
    const last = after[after.length - 1];
    expect(last.body).toBe(before[0].body);
    expect(Stripe.webhooks.constructEvent(last.body, last.signature!, SECRET).id).toBe(completedEventId);
  });

  it('records refunds, partial then the rest, and refuses refunding more', async () => {
    const partial = await refundPayment(paidIntent, 1000);
    expect(partial).toMatchObject({ object: 'refund', amount: 1000, currency: 'eur', payment_intent: paidIntent, status: 'succeeded' });
    expect(partial.id).toMatch(/^re_/);
    const fetched = await sdk.refunds.retrieve(partial.id);
    expect(fetched.amount).toBe(1000);

    // A doubled click with the same amount is the same refund, not a second one.
    expect((await refundPayment(paidIntent, 1000)).id).toBe(partial.id);

    const rest = await refundPayment(paidIntent);
    expect(rest.amount).toBe(5950 - 1000);

    const more = await sdk.refunds.create({ payment_intent: paidIntent, amount: 100 }).catch((e: unknown) => e);
    expect(more).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((more as Stripe.errors.StripeError).code).toBe('charge_already_refunded');

    const unknown = await sdk.refunds.create({ payment_intent: 'pi_test_unknown' }).catch((e: unknown) => e);
    expect(unknown).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
  });

  it('Decline expires the session, posts checkout.session.expired and returns the browser to cancel_url', async () => {
    const { id, url } = await createCheckoutSession(order('order-decline-1'));
    const res = await payOrDecline(url, 'decline');
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe(`${receiver.origin}/not-paid`);
    const [delivery] = await waitFor('the expired event', () => {
      const got = receiver.eventsOf(id, 'checkout.session.expired');
      return got.length > 0 && got;
    });
    expect(verifyWebhook(delivery.body, delivery.signature).type).toBe('checkout.session.expired');
    expect((await retrieveCheckoutSession(id)).status).toBe('expired');
  });

  it('retries a webhook the app refuses, with backoff, until it is taken', async () => {
    const { id, url } = await createCheckoutSession(order('order-retry-1'));
    receiver.failNext = 2;
    const res = await payOrDecline(url, 'pay');
    expect(res.status).toBe(303);
    await waitFor('delivery after two refusals', () => receiver.eventsOf(id, 'checkout.session.completed').length > 0);
    const events = (await (await fetch(`${standIn.base}/__events`)).json()) as {
      data: { session_id: string; type: string; delivered: boolean; deliveries: { status?: number }[] }[];
    };
    const record = events.data.find((e) => e.session_id === id && e.type === 'checkout.session.completed');
    expect(record?.delivered).toBe(true);
    expect(record?.deliveries.map((d) => d.status)).toEqual([500, 500, 200]);
  });

  it('keeps sessions across a restart when given a state file, and stops cleanly on SIGTERM', async () => {
    expect(await standIn.stop()).toBe(0);
    standIn = await startStandIn(standInEnv());
    const restarted = sdkFor(standIn);
    const session = await restarted.checkout.sessions.retrieve(paidSessionId);
    expect(session.status).toBe('complete');
    expect(session.payment_intent).toBe(paidIntent);
    const events = (await (await fetch(`${standIn.base}/__events`)).json()) as { data: { id: string }[] };
    expect(events.data.map((e) => e.id)).toContain(completedEventId);
  });
});
