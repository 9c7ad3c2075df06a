/**
 * Buying extra retouches against the running app, the real database, MailDev and the payment
 * stand-in (driven through the official SDK): checkout, the provider's signed webhooks, the return
 * page, refunds, and the provider being down. Webhook handling follows Stripe's webhook guidance
 * (verify the signature on the raw body, refuse stale timestamps, de-duplicate on the event id,
 * do not rely on event order).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { openSync, readFileSync, readdirSync } from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';
import Stripe from 'stripe';
import { db, closeDb } from '../../src/lib/server/db';
import { config } from '../../src/lib/server/config';
import { stripe, retrieveCheckoutSession } from '../../src/lib/server/payments';
import { PAYMENT_UNAVAILABLE } from '../../src/lib/server/orders';
import { makeStudio, makeShoot, memberAgent, clientAgent, type TestStudio } from '../support/factories';
import { APP, ARTIFACTS, PAYMENTS } from '../support/env';
import { mailsTo, waitForMail } from '../support/mail';
import type { Agent } from '../support/http';

const root = path.resolve(import.meta.dirname, '../..');

// ---------------------------------------------------------------------------------------------
// Setting up a client with picks sent

interface Terms {
  allowance: number;
  picks: number;
  extraPriceMinor: number;
  currency: string;
  taxRateBp: number;
  taxMode: 'exclusive' | 'inclusive';
}

interface Paying {
  studio: TestStudio;
  shootId: string;
  clientEmail: string;
  token: string;
  client: Agent;
}

async function addReadyFrames(studioId: string, shootId: string, n: number): Promise<string[]> {
  const rows = Array.from({ length: n }, (_, i) => ({
    studio_id: studioId,
    shoot_id: shootId,
    object_key: `test/${shootId}/frame-${i}.jpg`,
    original_name: `FRAME_${String(i + 1).padStart(4, '0')}.jpg`,
    bytes: 1000 + i,
    state: 'ready',
    width: 3000,
    height: 2000,
  }));
  const inserted = await db()('frames').insert(rows).returning('id');
  return inserted.map((r: { id: string }) => r.id);
}

/** A shoot with ready frames whose client has picked `picks` frames through the gallery API and sent them. */
async function payingClient(terms: Terms, studio?: TestStudio): Promise<Paying> {
  const s = studio ?? (await makeStudio('Pay'));
  const { shoot, client, token } = await makeShoot(s.studioId, {
    allowance: terms.allowance,
    extraPriceMinor: terms.extraPriceMinor,
    currency: terms.currency,
  });
  await db()('shoots').where({ id: shoot.id }).update({ tax_rate_bp: terms.taxRateBp, tax_mode: terms.taxMode });
  const frames = await addReadyFrames(s.studioId, shoot.id, Math.max(terms.picks, 1));
  const agent = await clientAgent(token);
  for (const frameId of frames.slice(0, terms.picks)) {
    const res = await agent.postJson(`/api/gallery/${shoot.id}/picks/${frameId}`, {}, 'PUT');
    expect(res.status, await res.clone().text()).toBeLessThan(300);
  }
  const sent = await agent.postJson(`/api/gallery/${shoot.id}/submit`, {});
  expect(sent.status, await sent.clone().text()).toBe(200);
  return { studio: s, shootId: shoot.id, clientEmail: client.email, token, client: agent };
}

const EUR_19: Terms = { allowance: 10, picks: 12, extraPriceMinor: 2500, currency: 'EUR', taxRateBp: 1900, taxMode: 'exclusive' };

async function checkout(p: Paying): Promise<{ status: number; url?: string; error?: string }> {
  const res = await p.client.postJson(`/api/gallery/${p.shootId}/checkout`, {});
  return { status: res.status, ...((await res.json()) as { url?: string; error?: string }) };
}

const sessionIdOf = (url: string) => decodeURIComponent(new URL(url).pathname.split('/').pop()!);

/** Presses Pay or Decline on the stand-in's test payment page, as the browser would. */
async function pressOnPayPage(url: string, action: 'pay' | 'decline') {
  const res = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams({ action }).toString(),
    redirect: 'manual',
  });
  await res.arrayBuffer();
  expect(res.status).toBe(303);
  return res.headers.get('location')!;
}

async function ordersOf(shootId: string) {
  return db()('orders').where({ shoot_id: shootId }).orderBy('attempt');
}

async function shootRow(shootId: string) {
  return db()('shoots').where({ id: shootId }).first();
}

interface StandInEvent {
  id: string;
  type: string;
  session_id: string;
  delivered: boolean;
  event: Stripe.Event;
}

async function standInEvents(sessionId: string): Promise<StandInEvent[]> {
  const body = (await (await fetch(`${PAYMENTS}/__events`)).json()) as { data: StandInEvent[] };
  return body.data.filter((e) => e.session_id === sessionId);
}

const secret = () => config().STRIPE_WEBHOOK_SECRET;

/** Posts a webhook to the app as the provider does: JSON, no Origin header, a Stripe-Signature. */
async function postWebhook(payload: string, signature: string | null, headers: Record<string, string> = {}) {
  const res = await fetch(`${APP}/api/payments/webhook`, {
    method: 'POST',
    headers: { 'content-type': 'application/json; charset=utf-8', ...(signature ? { 'stripe-signature': signature } : {}), ...headers },
    body: payload,
  });
  return { status: res.status, body: (await res.json().catch(() => null)) as Record<string, unknown> | null };
}

function eventFor(type: string, session: Stripe.Checkout.Session): string {
  const id = `evt_test_${Math.random().toString(36).slice(2)}${Date.now().toString(36)}`;
  return JSON.stringify({ id, object: 'event', api_version: Stripe.API_VERSION, created: Math.floor(Date.now() / 1000), type, livemode: false, pending_webhooks: 1, request: { id: null, idempotency_key: null }, data: { object: session } });
}

/** Waits until the outbox has sent everything queued for `to`, so MailDev holds all of it. */
async function outboxSettled(to: string) {
  for (let i = 0; i < 200; i++) {
    const queued = await db()('mail_outbox').where({ to_address: to, state: 'queued' }).first('id');
    if (!queued) return;
    await sleep(150);
  }
  throw new Error(`mail to ${to} is still queued`);
}

// ---------------------------------------------------------------------------------------------
// Stopping and restarting the payment stand-in of the running test stack

const PAYMENTS_PORT = Number(new URL(PAYMENTS).port);

function portOpen(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = net.connect({ host: '127.0.0.1', port }, () => { s.end(); resolve(true); });
    s.on('error', () => resolve(false));
  });
}

async function waitPort(port: number, open: boolean) {
  for (let i = 0; i < 200; i++) {
    if ((await portOpen(port)) === open) return;
    await sleep(100);
  }
  throw new Error(`port ${port} did not ${open ? 'open' : 'close'}`);
}

interface Proc { pid: number; ppid: number; env: Record<string, string>; cmd: string }

/** The stand-in's processes on this stack's port (the tsx launcher and the node process it runs). */
function standInProcesses(): Proc[] {
  const found: Proc[] = [];
  for (const name of readdirSync('/proc')) {
    if (!/^\d+$/.test(name)) continue;
    try {
      const cmd = readFileSync(`/proc/${name}/cmdline`, 'utf8').split('\0').join(' ');
      if (!cmd.includes('stand-ins/payments.ts')) continue;
      const env = Object.fromEntries(
        readFileSync(`/proc/${name}/environ`, 'utf8').split('\0').filter(Boolean).map((kv) => [kv.slice(0, kv.indexOf('=')), kv.slice(kv.indexOf('=') + 1)]),
      );
      if (env.PAYMENTS_PORT !== String(PAYMENTS_PORT)) continue;
      const ppid = Number(readFileSync(`/proc/${name}/stat`, 'utf8').replace(/^.*\) /, '').split(' ')[1]);
      found.push({ pid: Number(name), ppid, env, cmd });
    } catch {
      // The process ended while we looked.
    }
  }
  return found;
}

/**
 * Stops the stand-in for real and returns how to start it again the way scripts/lib/services.ts
 * does: tsx running scripts/stand-ins/payments.ts with the same environment. The restarted one is
 * tied to the test runner that started the first: when that runner exits, so does it.
 */
async function stopStandIn(): Promise<() => Promise<void>> {
  const procs = standInProcesses();
  if (procs.length === 0) throw new Error(`no payment stand-in found on port ${PAYMENTS_PORT}`);
  const pids = new Set(procs.map((p) => p.pid));
  const launcher = procs.find((p) => !pids.has(p.ppid)) ?? procs[0];
  // The test runner that owns the stand-in; a stand-in restarted by an earlier run names it in its env.
  const anchor = Number(launcher.env.FILLCARD_STANDIN_ANCHOR ?? (launcher.ppid > 1 ? launcher.ppid : 0));
  for (const p of [...procs].reverse()) {
    try { process.kill(p.pid, 'SIGTERM'); } catch { /* already gone */ }
  }
  await waitPort(PAYMENTS_PORT, false);
  return async () => {
    const log = openSync(path.join(ARTIFACTS, 'payments.log'), 'a');
    const child = spawn(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'scripts/stand-ins/payments.ts')], {
      cwd: root, env: { ...launcher.env, FILLCARD_STANDIN_ANCHOR: String(anchor) }, stdio: ['ignore', log, log], detached: true,
    });
    child.unref();
    if (anchor > 1) {
      const watch = spawn('sh', ['-c', `while kill -0 ${anchor} 2>/dev/null; do sleep 2; done; kill -TERM -${child.pid} 2>/dev/null`], {
        detached: true, stdio: 'ignore',
      });
      watch.unref();
    }
    await waitPort(PAYMENTS_PORT, true);
  };
}

// ---------------------------------------------------------------------------------------------

afterAll(async () => {
  await closeDb();
});

describe('the payment provider is down at checkout', () => {
  it('answers a clear 503 and leaves no order waiting without a payment page; works again once it is back', async () => {
    const p = await payingClient(EUR_19);
    const restart = await stopStandIn();
    let down: Awaited<ReturnType<typeof checkout>>;
    try {
      down = await checkout(p);
    } finally {
      await restart();
    }
    expect(down.status).toBe(503);
    expect(down.error).toBe(PAYMENT_UNAVAILABLE);
    const after = await ordersOf(p.shootId);
    expect(after.filter((o) => o.state === 'pending')).toEqual([]);
    expect(after.every((o) => o.state === 'failed' && o.checkout_session_id === null)).toBe(true);
    // The picks stay sent and locked.
    expect((await shootRow(p.shootId)).picks_submitted_at).not.toBeNull();

    const up = await checkout(p);
    expect(up.status).toBe(200);
    expect(up.url).toMatch(new RegExp(`^${PAYMENTS}/pay/cs_test_`));
    const orders = await ordersOf(p.shootId);
    const pending = orders.filter((o) => o.state === 'pending');
    expect(pending).toHaveLength(1);
    expect(pending[0].attempt).toBe(orders.length);
    expect(pending[0].checkout_url).toBe(up.url);
  });
});

describe('checkout', () => {
  it('refuses before the picks are sent, and when they fit in the package', async () => {
    const studio = await makeStudio('Refuse');
    const { shoot, token } = await makeShoot(studio.studioId, { allowance: 3 });
    const agent = await clientAgent(token);
    const early = await agent.postJson(`/api/gallery/${shoot.id}/checkout`, {});
    expect(early.status).toBe(409);
    expect(((await early.json()) as { error: string }).error).toMatch(/Send your picks first/);

    const within = await payingClient({ ...EUR_19, allowance: 5, picks: 4 }, studio);
    const none = await checkout(within);
    expect(none.status).toBe(409);
    expect(await ordersOf(within.shootId)).toEqual([]);
  });

  it('reuses the open payment page of a waiting order (same URL, one order)', async () => {
    const p = await payingClient(EUR_19);
    const a = await checkout(p);
    const b = await checkout(p);
    expect(a.status).toBe(200);
    expect(b.url).toBe(a.url);
    const orders = await ordersOf(p.shootId);
    expect(orders).toHaveLength(1);
    expect(orders[0]).toMatchObject({ state: 'pending', checkout_session_id: sessionIdOf(a.url!), attempt: 1 });
    const session = await retrieveCheckoutSession(sessionIdOf(a.url!));
    expect(session.metadata).toEqual({ order_id: orders[0].id, shoot_id: p.shootId, studio_id: p.studio.studioId });
    expect(session.customer_email).toBe(p.clientEmail);
    expect(session.success_url).toBe(`${APP}/gallery/${p.shootId}/payment?session={CHECKOUT_SESSION_ID}`);
    expect(session.cancel_url).toBe(`${APP}/gallery/${p.shootId}/payment?cancelled=1`);
  });

  it('three checkout requests at once share one order and one payment page', async () => {
    const p = await payingClient(EUR_19);
    const answers = await Promise.all([checkout(p), checkout(p), checkout(p)]);
    expect(answers.map((a) => a.status)).toEqual([200, 200, 200]);
    expect(new Set(answers.map((a) => a.url)).size).toBe(1);
    const orders = await ordersOf(p.shootId);
    expect(orders).toHaveLength(1);
    expect(orders[0].checkout_url).toBe(answers[0].url);
  });

  it('a price change while the page is open closes that page and makes a new order, keeping the picks locked', async () => {
    const p = await payingClient(EUR_19);
    const first = await checkout(p);
    await db()('shoots').where({ id: p.shootId }).update({ extra_price_minor: 3000 });
    const second = await checkout(p);
    expect(second.status).toBe(200);
    expect(second.url).not.toBe(first.url);
    expect((await retrieveCheckoutSession(sessionIdOf(first.url!))).status).toBe('expired');
    const orders = await ordersOf(p.shootId);
    // 2 extras × 3000 = 6000 cents; 19 % of 6000 = 1140; total 7140 (worked by hand)
    expect(orders.map((o) => [o.attempt, o.state, o.total_minor])).toEqual([[1, 'expired', 5950], [2, 'pending', 7140]]);
    // The provider's expiry webhook for the first page arrived and changed nothing more.
    expect((await standInEvents(sessionIdOf(first.url!))).map((e) => [e.type, e.delivered])).toEqual([['checkout.session.expired', true]]);
    expect((await shootRow(p.shootId)).picks_submitted_at).not.toBeNull();
  });

  it('refuses a total above 2,147,483,647 minor units (integer columns) without making an order', async () => {
    // 2 extras × 2 000 000 000 = 4 000 000 000 > 2 147 483 647 (2^31 − 1, PostgreSQL integer maximum)
    const p = await payingClient({ allowance: 1, picks: 3, extraPriceMinor: 2_000_000_000, currency: 'JPY', taxRateBp: 0, taxMode: 'exclusive' });
    const res = await checkout(p);
    expect(res.status).toBe(422);
    expect(res.error).toMatch(/too large/);
    expect(await ordersOf(p.shootId)).toEqual([]);
  });
});

describe('amounts match hand-worked examples', () => {
  // Each expected figure is worked by hand with Fillcard's one rounding rule (nearest minor unit,
  // halves away from zero); minor units per ISO 4217 (JPY 0, EUR 2, GBP 2). The e-mailed total is
  // compared with ECMA-402 Intl.NumberFormat given the hand-worked amount in major units.
  const cases: { name: string; terms: Terms; want: { extras: number; net: number; tax: number; total: number; major: number } }[] = [
    {
      // extras = 13 − 10 = 3; net = 3 × 3000 = 9000 yen; tax = 9000 × 10 % = 900; total = 9900 yen
      name: 'JPY, 10 % added',
      terms: { allowance: 10, picks: 13, extraPriceMinor: 3000, currency: 'JPY', taxRateBp: 1000, taxMode: 'exclusive' },
      want: { extras: 3, net: 9000, tax: 900, total: 9900, major: 9900 },
    },
    {
      // extras = 12 − 10 = 2; net = 2 × 2500 = 5000 cents; tax = 5000 × 19 % = 950; total = 5950 cents = €59.50
      name: 'EUR, 19 % added',
      terms: EUR_19,
      want: { extras: 2, net: 5000, tax: 950, total: 5950, major: 59.5 },
    },
    {
      // extras = 5 − 2 = 3; total = 3 × 1999 = 5997 pence (tax included);
      // net = 5997 × 10000 / 12000 = 4997.5 → 4998 (half away from zero); tax = 5997 − 4998 = 999
      name: 'GBP, 20 % included',
      terms: { allowance: 2, picks: 5, extraPriceMinor: 1999, currency: 'GBP', taxRateBp: 2000, taxMode: 'inclusive' },
      want: { extras: 3, net: 4998, tax: 999, total: 5997, major: 59.97 },
    },
  ];

  for (const c of cases) {
    it(`${c.name}: order, payment page and receipt`, async () => {
      const p = await payingClient(c.terms);
      const res = await checkout(p);
      expect(res.status).toBe(200);
      const [order] = await ordersOf(p.shootId);
      expect(order).toMatchObject({
        extras: c.want.extras,
        unit_price_minor: c.terms.extraPriceMinor,
        net_minor: c.want.net,
        tax_minor: c.want.tax,
        total_minor: c.want.total,
        currency: c.terms.currency,
        tax_rate_bp: c.terms.taxRateBp,
        tax_mode: c.terms.taxMode,
      });
      const sessionId = sessionIdOf(res.url!);
      const session = await retrieveCheckoutSession(sessionId);
      expect(session.amount_total).toBe(c.want.total);
      expect(session.currency).toBe(c.terms.currency.toLowerCase());
      const items = await stripe().checkout.sessions.listLineItems(sessionId);
      expect(items.data[0]).toMatchObject({ description: 'Extra retouch', quantity: c.want.extras });
      expect(items.data[0].price?.unit_amount).toBe(c.terms.extraPriceMinor);

      await pressOnPayPage(res.url!, 'pay');
      expect((await ordersOf(p.shootId))[0].state).toBe('paid');
      const receipt = await waitForMail(p.clientEmail, /^Receipt/);
      const digits = c.terms.currency === 'JPY' ? 0 : 2;
      const intl = (major: number) => new Intl.NumberFormat('en-GB', { style: 'currency', currency: c.terms.currency, minimumFractionDigits: digits, maximumFractionDigits: digits }).format(major);
      expect(receipt.subject).toContain(intl(c.want.major));
      expect(receipt.text).toContain(`Extra retouches: ${c.want.extras} × `);
      expect(receipt.text).toContain(`Total paid: ${intl(c.want.major)}`);
    });
  }
});

describe('webhooks', () => {
  let paid: Paying & { sessionId: string; orderId: string };

  beforeAll(async () => {
    const p = await payingClient(EUR_19);
    const res = await checkout(p);
    const sessionId = sessionIdOf(res.url!);
    const back = await pressOnPayPage(res.url!, 'pay');
    expect(back).toBe(`${APP}/gallery/${p.shootId}/payment?session=${sessionId}`);
    const [order] = await ordersOf(p.shootId);
    paid = { ...p, sessionId, orderId: order.id };
  });

  it('the same completed event delivered 5 times makes one paid order and exactly one receipt', async () => {
    const [completed] = (await standInEvents(paid.sessionId)).filter((e) => e.type === 'checkout.session.completed');
    expect(completed.delivered).toBe(true);
    // Four more deliveries through the stand-in, each freshly signed, as a provider's retries are.
    for (let i = 0; i < 4; i++) {
      const res = await fetch(`${PAYMENTS}/__resend/${completed.id}`, { method: 'POST' });
      const body = (await res.json()) as { delivered: boolean };
      expect(body.delivered).toBe(true);
    }
    const again = await postWebhook(JSON.stringify(completed.event), Stripe.webhooks.generateTestHeaderString({ payload: JSON.stringify(completed.event), secret: secret() }));
    expect(again).toEqual({ status: 200, body: { received: true, duplicate: true } });

    const orders = await ordersOf(paid.shootId);
    expect(orders).toHaveLength(1);
    expect(orders[0]).toMatchObject({ state: 'paid', payment_intent_id: expect.stringMatching(/^pi_test_/) });
    expect(orders[0].paid_at).not.toBeNull();
    expect(await db()('payment_events').where({ provider_event_id: completed.id }).count('* as n').first()).toMatchObject({ n: 1 });
    const shoot = await shootRow(paid.shootId);
    expect(shoot.stage).toBe('retouching');
    expect(shoot.picks_submitted_at).not.toBeNull();

    await waitForMail(paid.clientEmail, /^Receipt/);
    await outboxSettled(paid.clientEmail);
    const receipts = (await mailsTo(paid.clientEmail)).filter((m) => /^Receipt/.test(m.subject));
    expect(receipts).toHaveLength(1);
    // The studio's owner hears of it once: one e-mail with the payment and the pick list together.
    const notice = await waitForMail(paid.studio.owner.email, /^Paid:/);
    await outboxSettled(paid.studio.owner.email);
    const { title } = await shootRow(paid.shootId);
    const toOwner = (await mailsTo(paid.studio.owner.email)).filter((m) => m.subject.includes(`“${title}”`));
    expect(toOwner.map((m) => m.subject)).toEqual([notice.subject]);
    expect(notice.subject).toMatch(/\(\d+ picks\)$/);
    expect(notice.text).toContain('The picks are locked and the shoot has moved to retouching.');
    expect(notice.text).toMatch(/^1\. /m);
  });

  it('an expired event arriving after completed leaves the order paid', async () => {
    const session = await retrieveCheckoutSession(paid.sessionId);
    const payload = eventFor('checkout.session.expired', { ...session, status: 'expired', payment_status: 'unpaid', url: null });
    const res = await postWebhook(payload, Stripe.webhooks.generateTestHeaderString({ payload, secret: secret() }));
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ received: true, settlement: 'unchanged' });
    const [order] = await ordersOf(paid.shootId);
    expect(order.state).toBe('paid');
    const shoot = await shootRow(paid.shootId);
    expect(shoot.picks_submitted_at).not.toBeNull();
    expect(shoot.stage).toBe('retouching');
  });

  it('refuses a forged signature, a replayed old timestamp and a missing signature with 400, changing nothing', async () => {
    const p = await payingClient(EUR_19);
    const res = await checkout(p);
    const session = await retrieveCheckoutSession(sessionIdOf(res.url!));
    const claim = { ...session, status: 'complete' as const, payment_status: 'paid' as const, payment_intent: 'pi_test_forged' };
    const forged = eventFor('checkout.session.completed', claim);
    const stale = eventFor('checkout.session.completed', claim);
    const missing = eventFor('checkout.session.completed', claim);

    const bad = await postWebhook(forged, Stripe.webhooks.generateTestHeaderString({ payload: forged, secret: 'whsec_not_the_studios_secret' }));
    // 301 s old: just past the 300 s tolerance (Stripe's default, kept by Fillcard).
    const old = await postWebhook(stale, Stripe.webhooks.generateTestHeaderString({ payload: stale, secret: secret(), timestamp: Math.floor(Date.now() / 1000) - 301 }));
    const none = await postWebhook(missing, null);
    expect([bad.status, old.status, none.status]).toEqual([400, 400, 400]);
    expect(bad.body?.error).toMatch(/signature/);

    const ids = [forged, stale, missing].map((e) => (JSON.parse(e) as { id: string }).id);
    expect(await db()('payment_events').whereIn('provider_event_id', ids)).toEqual([]);
    const [order] = await ordersOf(p.shootId);
    expect(order).toMatchObject({ state: 'pending', payment_intent_id: null, paid_at: null });
    expect((await shootRow(p.shootId)).stage).toBe('proofing');

    // Control: the same claim, properly signed, is stored; the order still is not paid, because the
    // provider's own record (re-read) says the session is open.
    const fresh = eventFor('checkout.session.completed', claim);
    const ok = await postWebhook(fresh, Stripe.webhooks.generateTestHeaderString({ payload: fresh, secret: secret() }));
    expect(ok).toEqual({ status: 200, body: { received: true, settlement: 'unchanged' } });
    expect((await ordersOf(p.shootId))[0].state).toBe('pending');
  });

  it('passes Astro’s origin check as JSON without an Origin header (a form post from elsewhere would not)', async () => {
    const json = await postWebhook('{}', 't=1,v1=00');
    expect(json.status).toBe(400);
    expect(json.body?.error).toMatch(/signature/);
    const form = await fetch(`${APP}/api/payments/webhook`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: 'a=1',
    });
    expect(form.status).toBe(403);
  });

  it('stores an event of another type once and leaves everything alone', async () => {
    const payload = JSON.stringify({ id: `evt_other_${Date.now()}`, object: 'event', type: 'customer.created', created: 1, data: { object: { id: 'cus_x', object: 'customer' } } });
    const res = await postWebhook(payload, Stripe.webhooks.generateTestHeaderString({ payload, secret: secret() }));
    expect(res).toEqual({ status: 200, body: { received: true, ignored: true } });
    const row = await db()('payment_events').where({ provider_event_id: (JSON.parse(payload) as { id: string }).id }).first();
    expect(row).toMatchObject({ type: 'customer.created', order_id: null });
    expect(row.processed_at).not.toBeNull();
  });

  describe('refunds', () => {
    it('refuses the client (401), a retoucher (403) and an owner of another studio (404)', async () => {
      const other = await makeStudio('Elsewhere');
      const url = `/api/orders/${paid.orderId}/refund`;
      expect((await paid.client.postJson(url, {})).status).toBe(401);
      expect((await (await memberAgent(paid.studio.retoucher.email)).postJson(url, {})).status).toBe(403);
      expect((await (await memberAgent(other.owner.email)).postJson(url, {})).status).toBe(404);
      expect((await ordersOf(paid.shootId))[0].state).toBe('paid');
    });

    it('refunds in full through the provider for the owner, once', async () => {
      const owner = await memberAgent(paid.studio.owner.email);
      const res = await owner.postJson(`/api/orders/${paid.orderId}/refund`, {});
      expect(res.status).toBe(200);
      const body = (await res.json()) as { order: { state: string; refundedMinor: number } };
      expect(body.order).toMatchObject({ state: 'refunded', refundedMinor: 5950 });
      const [order] = await ordersOf(paid.shootId);
      expect(order.state).toBe('refunded');
      // The stand-in recorded the refund against the payment.
      const refund = await stripe().refunds.retrieve(order.refund_id);
      expect(refund).toMatchObject({ amount: 5950, payment_intent: order.payment_intent_id, status: 'succeeded' });
      const twice = await owner.postJson(`/api/orders/${paid.orderId}/refund`, {});
      expect(twice.status).toBe(409);
      await waitForMail(paid.clientEmail, /^Refund/);
    });
  });
});

describe('the return page', () => {
  it('a return to the success URL without a webhook leaves the order pending and says it is being confirmed', async () => {
    const p = await payingClient(EUR_19);
    const res = await checkout(p);
    const sessionId = sessionIdOf(res.url!);
    const page = await p.client.get(`/gallery/${p.shootId}/payment?session=${sessionId}`);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain('Payment being confirmed');
    expect(html).not.toContain('Paid —');
    const status = await p.client.get(`/api/gallery/${p.shootId}/checkout?session=${sessionId}`);
    expect(((await status.json()) as { order: { state: string } }).order.state).toBe('pending');
    expect((await ordersOf(p.shootId))[0]).toMatchObject({ state: 'pending', paid_at: null });
    expect((await shootRow(p.shootId)).stage).toBe('proofing');
  });

  it('after a decline the order expires and the picks unlock; paying again is a new order with a new page', async () => {
    const p = await payingClient(EUR_19);
    const first = await checkout(p);
    const back = await pressOnPayPage(first.url!, 'decline');
    expect(back).toBe(`${APP}/gallery/${p.shootId}/payment?cancelled=1`);
    expect((await ordersOf(p.shootId))[0].state).toBe('expired');
    expect((await shootRow(p.shootId)).picks_submitted_at).toBeNull();

    const page = await p.client.get(`/gallery/${p.shootId}/payment?cancelled=1`);
    const html = await page.text();
    expect(html).toContain('Payment not completed');
    expect(html).toContain('Your picks are kept; you can pay or change your picks.');

    // "Try paying again" sends the same picks again and opens a new payment page.
    const again = await p.client.postForm(`/gallery/${p.shootId}/payment?cancelled=1`, { intent: 'pay' });
    expect(again.status).toBe(303);
    const url = again.headers.get('location')!;
    expect(url).not.toBe(first.url);
    const orders = await ordersOf(p.shootId);
    expect(orders.map((o) => [o.attempt, o.state])).toEqual([[1, 'expired'], [2, 'pending']]);
    expect(orders[1].checkout_url).toBe(url);
    expect((await shootRow(p.shootId)).picks_submitted_at).not.toBeNull();
  });

  it('"Change my picks" closes an open payment page at the provider and unlocks the picks', async () => {
    const p = await payingClient(EUR_19);
    const res = await checkout(p);
    const change = await p.client.postForm(`/gallery/${p.shootId}/payment?cancelled=1`, { intent: 'change' });
    expect(change.status).toBe(303);
    expect(change.headers.get('location')).toBe(`/gallery/${p.shootId}`);
    expect((await retrieveCheckoutSession(sessionIdOf(res.url!))).status).toBe('expired');
    expect((await ordersOf(p.shootId))[0].state).toBe('expired');
    expect((await shootRow(p.shootId)).picks_submitted_at).toBeNull();
  });
});
