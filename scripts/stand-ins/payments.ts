/**
 * Local payment stand-in: a small server of Fillcard's own that answers the Checkout Session and
 * Refund calls the official `stripe` SDK makes (form-encoded requests, Bearer key, Stripe's
 * response and error shapes, Idempotency-Key replay), shows a plainly labelled test payment page,
 * and posts `checkout.session.*` webhooks signed with the SDK's own signing helper, so the app runs
 * its real payment code path end to end without a network or an account.
 *
 * Usage: tsx scripts/stand-ins/payments.ts
 * Environment:
 *   PAYMENTS_PORT               port on 127.0.0.1 (default 12111; 0 picks a free one, printed on start)
 *   STRIPE_SECRET_KEY           the only API key accepted (same default as the app)
 *   STRIPE_WEBHOOK_SECRET       signs webhooks (same default as the app)
 *   PUBLIC_ORIGIN               the app; webhooks go to PUBLIC_ORIGIN/api/payments/webhook
 *   PAYMENTS_WEBHOOK_URL        optional: post webhooks here instead
 *   PAYMENTS_PUBLIC_URL         optional: the stand-in's own address as browsers reach it
 *   PAYMENTS_STATE_FILE         optional: JSON file that keeps sessions, payments, refunds and events across restarts
 *   PAYMENTS_WEBHOOK_ATTEMPTS   deliveries tried per event before giving up (default 6)
 *   PAYMENTS_WEBHOOK_BACKOFF_MS wait before the first retry, doubled each time (default 1000)
 * Test helpers: GET /__health, GET /__events, POST /__resend/:eventId.
 */
import http from 'node:http';
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import Stripe from 'stripe';
import { z } from 'zod';
import { configSchema } from '../../src/lib/server/config';
import { formatMoney, isCurrencyCode, minorUnits } from '../../src/lib/currency';

const blankToUndefined = (v: unknown) => (v === '' ? undefined : v);
const env = configSchema
  .pick({ STRIPE_SECRET_KEY: true, STRIPE_WEBHOOK_SECRET: true, PUBLIC_ORIGIN: true })
  .extend({
    PAYMENTS_PORT: z.coerce.number().int().min(0).max(65535).default(12111),
    PAYMENTS_WEBHOOK_URL: z.preprocess(blankToUndefined, z.string().url().optional()),
    PAYMENTS_PUBLIC_URL: z.preprocess(blankToUndefined, z.string().url().optional()),
    PAYMENTS_STATE_FILE: z.preprocess(blankToUndefined, z.string().optional()),
    PAYMENTS_WEBHOOK_ATTEMPTS: z.coerce.number().int().min(1).max(20).default(6),
    PAYMENTS_WEBHOOK_BACKOFF_MS: z.coerce.number().int().min(0).max(3_600_000).default(1000),
  })
  .parse(process.env);

const HOST = '127.0.0.1';
const webhookUrl = env.PAYMENTS_WEBHOOK_URL ?? new URL('/api/payments/webhook', env.PUBLIC_ORIGIN).toString();
let publicBase = env.PAYMENTS_PUBLIC_URL?.replace(/\/$/, '') ?? '';

function log(message: string) {
  console.log(`[payments ${new Date().toISOString()}] ${message}`);
}

// ---------------------------------------------------------------------------------------------
// Objects, in the shapes the Stripe API returns (the fields the SDK's types mark as always there
// for a one-time card payment through a hosted page).

type SessionStatus = 'open' | 'complete' | 'expired';

interface CheckoutSession {
  id: string;
  object: 'checkout.session';
  amount_subtotal: number;
  amount_total: number;
  cancel_url: string | null;
  client_reference_id: string | null;
  created: number;
  currency: string;
  customer: null;
  customer_details: { email: string | null; name: null; phone: null; address: null; tax_exempt: 'none'; tax_ids: [] } | null;
  customer_email: string | null;
  expires_at: number;
  livemode: false;
  locale: null;
  metadata: Record<string, string>;
  mode: 'payment';
  payment_intent: string | null;
  payment_method_types: ['card'];
  payment_status: 'unpaid' | 'paid';
  status: SessionStatus;
  success_url: string;
  total_details: { amount_discount: 0; amount_shipping: 0; amount_tax: 0 };
  ui_mode: 'hosted';
  url: string | null;
  line_items?: ListObject<LineItem>;
}

interface LineItem {
  id: string;
  object: 'item';
  amount_discount: 0;
  amount_subtotal: number;
  amount_tax: 0;
  amount_total: number;
  currency: string;
  description: string;
  price: {
    id: string;
    object: 'price';
    active: false;
    currency: string;
    livemode: false;
    product: string;
    type: 'one_time';
    unit_amount: number;
    unit_amount_decimal: string;
  };
  quantity: number;
  /** Not a Stripe field on line items; the pay page shows it. Stripped from API answers. */
  product_description?: string | null;
}

interface ListObject<T> {
  object: 'list';
  data: T[];
  has_more: false;
  url: string;
}

interface Refund {
  id: string;
  object: 'refund';
  amount: number;
  balance_transaction: null;
  charge: string;
  created: number;
  currency: string;
  destination_details: null;
  metadata: Record<string, string>;
  payment_intent: string;
  reason: string | null;
  receipt_number: null;
  source_transfer_reversal: null;
  status: 'succeeded';
  transfer_reversal: null;
}

interface Payment {
  paymentIntent: string;
  charge: string;
  sessionId: string;
  amount: number;
  currency: string;
  refunded: number;
}

interface Delivery {
  attempt: number;
  at: string;
  status?: number;
  error?: string;
}

interface EventRecord {
  id: string;
  type: string;
  created: number;
  sessionId: string;
  /** The exact body posted, so a re-delivery is byte-for-byte the same event. */
  payload: string;
  deliveries: Delivery[];
  delivered: boolean;
}

interface IdempotencyRecord {
  method: string;
  path: string;
  body: string;
  status: number;
  response: unknown;
  createdAt: number;
}

interface State {
  sessions: Record<string, { session: CheckoutSession; lineItems: LineItem[]; apiVersion: string }>;
  payments: Record<string, Payment>;
  refunds: Record<string, Refund>;
  events: EventRecord[];
  idempotency: Record<string, IdempotencyRecord>;
}

const emptyState = (): State => ({ sessions: {}, payments: {}, refunds: {}, events: [], idempotency: {} });

function loadState(): State {
  const file = env.PAYMENTS_STATE_FILE;
  if (!file || !existsSync(file)) return emptyState();
  try {
    const loaded = JSON.parse(readFileSync(file, 'utf8')) as Partial<State>;
    log(`state loaded from ${file}`);
    return { ...emptyState(), ...loaded };
  } catch (err) {
    log(`state file ${file} is unreadable (${(err as Error).message}); starting empty`);
    return emptyState();
  }
}

const state = loadState();

function saveState() {
  const file = env.PAYMENTS_STATE_FILE;
  if (!file) return;
  mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  // Write then rename, so a crash mid-write never leaves half a file behind.
  const tmp = `${file}.${process.pid}.tmp`;
  writeFileSync(tmp, JSON.stringify(state));
  renameSync(tmp, file);
}

const ALPHABET = 'abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789';
function newId(prefix: string, length = 24): string {
  const bytes = randomBytes(length);
  let id = '';
  for (const b of bytes) id += ALPHABET[b % ALPHABET.length];
  return `${prefix}${id}`;
}

const now = () => Math.floor(Date.now() / 1000);

// ---------------------------------------------------------------------------------------------
// Errors in Stripe's shape: { error: { type, code?, param?, message } } with a fitting status.

class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly extra: { type?: string; code?: string; param?: string } = {},
  ) {
    super(message);
  }

  body() {
    return {
      error: {
        type: this.extra.type ?? 'invalid_request_error',
        ...(this.extra.code ? { code: this.extra.code } : {}),
        ...(this.extra.param ? { param: this.extra.param } : {}),
        message: this.message,
      },
    };
  }
}

const missing = (param: string) => new ApiError(400, `Missing required param: ${param}.`, { code: 'parameter_missing', param });
const invalid = (param: string, message: string) => new ApiError(400, message, { code: 'parameter_invalid', param });
const noSuch = (kind: string, id: string, param: string) =>
  new ApiError(404, `No such ${kind}: '${id}'`, { code: 'resource_missing', param });

// ---------------------------------------------------------------------------------------------
// Form bodies as the SDK encodes them: line_items[0][price_data][currency]=eur, expand[0]=x.

type FormValue = string | FormValue[] | { [key: string]: FormValue };

function parseForm(text: string): Record<string, FormValue> {
  const root: Record<string, FormValue> = Object.create(null);
  for (const [fullKey, value] of new URLSearchParams(text)) {
    const match = /^([^[\]]+)((?:\[[^[\]]*\])*)$/.exec(fullKey);
    if (!match) throw new ApiError(400, `Invalid parameter name: ${fullKey}`);
    const segments = [match[1], ...[...match[2].matchAll(/\[([^[\]]*)\]/g)].map((m) => m[1])];
    if (segments.some((s) => s === '__proto__' || s === 'constructor' || s === 'prototype')) {
      throw new ApiError(400, `Invalid parameter name: ${fullKey}`);
    }
    let node: Record<string, FormValue> = root;
    segments.forEach((segment, i) => {
      const key = segment === '' ? String(Object.keys(node).length) : segment;
      if (i === segments.length - 1) {
        node[key] = value;
        return;
      }
      const next = node[key];
      if (next === undefined) {
        const created: Record<string, FormValue> = Object.create(null);
        node[key] = created;
        node = created;
      } else if (typeof next === 'object' && !Array.isArray(next)) {
        node = next;
      } else {
        throw new ApiError(400, `Invalid parameter: ${fullKey} mixes a value and nested values`);
      }
    });
  }
  return toArrays(root) as Record<string, FormValue>;
}

/** Objects whose keys are 0, 1, 2… become arrays, as the SDK encodes arrays that way. */
function toArrays(value: FormValue): FormValue {
  if (typeof value === 'string' || Array.isArray(value)) return value;
  const keys = Object.keys(value);
  const converted: Record<string, FormValue> = Object.create(null);
  for (const k of keys) converted[k] = toArrays(value[k]);
  if (keys.length > 0 && keys.every((k) => /^\d+$/.test(k))) {
    const indexes = keys.map(Number).sort((a, b) => a - b);
    if (indexes.every((n, i) => n === i)) return indexes.map((i) => converted[String(i)]);
  }
  return converted;
}

function asString(value: FormValue | undefined, param: string): string | undefined {
  if (value === undefined) return undefined;
  if (typeof value !== 'string') throw invalid(param, `Invalid string: ${param} must be a single value.`);
  return value;
}

function asObject(value: FormValue | undefined, param: string): Record<string, FormValue> | undefined {
  if (value === undefined) return undefined;
  if (typeof value !== 'object' || Array.isArray(value)) throw invalid(param, `Invalid object: ${param}.`);
  return value;
}

function asArray(value: FormValue | undefined, param: string): FormValue[] | undefined {
  if (value === undefined) return undefined;
  if (!Array.isArray(value)) throw invalid(param, `Invalid array: ${param}.`);
  return value;
}

function asInteger(value: FormValue | undefined, param: string, min: number): number | undefined {
  const text = asString(value, param);
  if (text === undefined) return undefined;
  if (!/^-?\d+$/.test(text) || !Number.isSafeInteger(Number(text))) throw invalid(param, `Invalid integer: ${text}`);
  const n = Number(text);
  if (n < min) throw invalid(param, `This value must be greater than or equal to ${min}.`);
  return n;
}

function refuseUnknown(params: Record<string, FormValue>, allowed: string[], prefix = '') {
  for (const key of Object.keys(params)) {
    if (!allowed.includes(key)) {
      const name = prefix ? `${prefix}[${key}]` : key;
      throw new ApiError(400, `Received unknown parameter: ${name}`, { code: 'parameter_unknown', param: name });
    }
  }
}

function asUrl(value: FormValue | undefined, param: string): string | undefined {
  const text = asString(value, param);
  if (text === undefined) return undefined;
  let ok = false;
  try {
    const u = new URL(text.replaceAll('{CHECKOUT_SESSION_ID}', 'x'));
    ok = u.protocol === 'http:' || u.protocol === 'https:';
  } catch {
    ok = false;
  }
  if (!ok) throw invalid(param, `Not a valid URL`);
  return text;
}

function asMetadata(value: FormValue | undefined, param: string): Record<string, string> {
  const object = asObject(value, param) ?? {};
  const metadata: Record<string, string> = {};
  const keys = Object.keys(object);
  // Stripe's documented metadata limits: 50 keys, names up to 40 characters, values up to 500.
  if (keys.length > 50) throw invalid(param, 'You can have at most 50 metadata keys.');
  for (const key of keys) {
    const v = asString(object[key], `${param}[${key}]`)!;
    if (key.length > 40) throw invalid(`${param}[${key}]`, 'Metadata keys can be at most 40 characters long.');
    if (v.length > 500) throw invalid(`${param}[${key}]`, 'Metadata values can be at most 500 characters long.');
    metadata[key] = v;
  }
  return metadata;
}

/**
 * Stripe's currency rules for charge amounts: three-decimal currencies need the last digit to be
 * 0; amounts have at most eight digits (Stripe's currency guide; the eight-digit limit from memory).
 */
function checkChargeAmount(amount: number, currency: string, param: string) {
  if (minorUnits(currency) === 3 && amount % 10 !== 0) {
    throw invalid(param, `Invalid amount: ${currency.toUpperCase()} amounts must end in 0 (round to the nearest ten).`);
  }
  if (amount > 99_999_999) {
    throw invalid(param, `Amount must be no more than 99999999 (${formatMoney(99_999_999, currency)}).`);
  }
}

// ---------------------------------------------------------------------------------------------
// Checkout Sessions

function expandable(session: CheckoutSession, lineItems: LineItem[], expand: string[]): CheckoutSession {
  const copy: CheckoutSession = { ...session };
  if (expand.includes('line_items')) {
    copy.line_items = {
      object: 'list',
      data: lineItems.map(publicLineItem),
      has_more: false,
      url: `/v1/checkout/sessions/${session.id}/line_items`,
    };
  }
  return copy;
}

function publicLineItem(item: LineItem): LineItem {
  const { product_description: _hidden, ...rest } = item;
  return rest;
}

function expandParam(params: Record<string, FormValue>): string[] {
  const expand = asArray(params.expand, 'expand') ?? [];
  return expand.map((v, i) => asString(v, `expand[${i}]`)!);
}

function createSession(params: Record<string, FormValue>, apiVersion: string): CheckoutSession {
  refuseUnknown(params, [
    'mode', 'line_items', 'success_url', 'cancel_url', 'customer_email', 'metadata', 'client_reference_id', 'expires_at', 'expand',
  ]);
  const mode = asString(params.mode, 'mode');
  if (!mode) throw missing('mode');
  if (mode !== 'payment') throw invalid('mode', `This test stand-in supports mode=payment only, not ${mode}.`);

  const rawItems = asArray(params.line_items, 'line_items');
  if (!rawItems || rawItems.length === 0) throw missing('line_items');
  const created = now();
  let currency: string | undefined;
  const lineItems: LineItem[] = rawItems.map((raw, i) => {
    const p = `line_items[${i}]`;
    const item = asObject(raw, p)!;
    refuseUnknown(item, ['quantity', 'price_data'], p);
    const quantity = asInteger(item.quantity, `${p}[quantity]`, 1);
    if (quantity === undefined) throw missing(`${p}[quantity]`);
    const priceData = asObject(item.price_data, `${p}[price_data]`);
    if (!priceData) throw missing(`${p}[price_data]`);
    refuseUnknown(priceData, ['currency', 'unit_amount', 'product_data'], `${p}[price_data]`);
    const itemCurrency = asString(priceData.currency, `${p}[price_data][currency]`)?.toLowerCase();
    if (!itemCurrency) throw missing(`${p}[price_data][currency]`);
    if (!isCurrencyCode(itemCurrency)) throw invalid(`${p}[price_data][currency]`, `Invalid currency: ${itemCurrency}.`);
    if (currency && currency !== itemCurrency) {
      throw invalid(`${p}[price_data][currency]`, 'All line items must use the same currency.');
    }
    currency = itemCurrency;
    const unitAmount = asInteger(priceData.unit_amount, `${p}[price_data][unit_amount]`, 0);
    if (unitAmount === undefined) throw missing(`${p}[price_data][unit_amount]`);
    const productData = asObject(priceData.product_data, `${p}[price_data][product_data]`);
    if (!productData) throw missing(`${p}[price_data][product_data]`);
    refuseUnknown(productData, ['name', 'description'], `${p}[price_data][product_data]`);
    const name = asString(productData.name, `${p}[price_data][product_data][name]`);
    if (!name) throw missing(`${p}[price_data][product_data][name]`);
    const description = asString(productData.description, `${p}[price_data][product_data][description]`);
    if (description === '') {
      throw invalid(`${p}[price_data][product_data][description]`, 'You passed an empty string for the description.');
    }
    return {
      id: newId('li_'),
      object: 'item',
      amount_discount: 0,
      amount_subtotal: unitAmount * quantity,
      amount_tax: 0,
      amount_total: unitAmount * quantity,
      currency: itemCurrency,
      description: name,
      price: {
        id: newId('price_'),
        object: 'price',
        active: false,
        currency: itemCurrency,
        livemode: false,
        product: newId('prod_'),
        type: 'one_time',
        unit_amount: unitAmount,
        unit_amount_decimal: String(unitAmount),
      },
      quantity,
      product_description: description ?? null,
    };
  });
  const amountTotal = lineItems.reduce((sum, li) => sum + li.amount_total, 0);
  checkChargeAmount(amountTotal, currency!, 'line_items');

  const successUrl = asUrl(params.success_url, 'success_url');
  if (!successUrl) throw missing('success_url');
  const cancelUrl = asUrl(params.cancel_url, 'cancel_url') ?? null;
  const customerEmail = asString(params.customer_email, 'customer_email') ?? null;
  if (customerEmail !== null && !/^[^\s@]+@[^\s@]+$/.test(customerEmail)) {
    throw invalid('customer_email', `Invalid email address: ${customerEmail}`);
  }
  const clientReferenceId = asString(params.client_reference_id, 'client_reference_id') ?? null;
  if (clientReferenceId !== null && (clientReferenceId.length === 0 || clientReferenceId.length > 200)) {
    throw invalid('client_reference_id', 'client_reference_id must be 1 to 200 characters long.');
  }
  const metadata = asMetadata(params.metadata, 'metadata');
  // Stripe accepts an expiry between 30 minutes and 24 hours after creation, and defaults to 24 hours.
  const expiresAt = asInteger(params.expires_at, 'expires_at', 0) ?? created + 24 * 3600;
  if (expiresAt < created + 30 * 60 - 60 || expiresAt > created + 24 * 3600 + 60) {
    throw invalid('expires_at', 'The expires_at timestamp must be between 30 minutes and 24 hours from now.');
  }
  const expand = expandParam(params);

  const id = newId('cs_test_', 40);
  const session: CheckoutSession = {
    id,
    object: 'checkout.session',
    amount_subtotal: amountTotal,
    amount_total: amountTotal,
    cancel_url: cancelUrl,
    client_reference_id: clientReferenceId,
    created,
    currency: currency!,
    customer: null,
    customer_details: null,
    customer_email: customerEmail,
    expires_at: expiresAt,
    livemode: false,
    locale: null,
    metadata,
    mode: 'payment',
    payment_intent: null,
    payment_method_types: ['card'],
    payment_status: 'unpaid',
    status: 'open',
    success_url: successUrl,
    total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
    ui_mode: 'hosted',
    url: `${publicBase}/pay/${id}`,
  };
  state.sessions[id] = { session, lineItems, apiVersion };
  saveState();
  log(`session ${id} created: ${formatMoney(amountTotal, currency!)} (${lineItems.length} line item${lineItems.length === 1 ? '' : 's'})`);
  return expandable(session, lineItems, expand);
}

function findSession(id: string) {
  const record = state.sessions[id];
  if (!record) throw noSuch('checkout.session', id, 'session');
  return record;
}

/** Sessions past their expiry are expired when next looked at, and by a sweep, as Stripe does on its own. */
async function expireIfDue(id: string) {
  const record = state.sessions[id];
  if (record && record.session.status === 'open' && record.session.expires_at <= now()) {
    await expireSession(id, 'time ran out');
  }
}

async function expireSession(id: string, why: string): Promise<CheckoutSession> {
  const record = findSession(id);
  if (record.session.status !== 'open') {
    throw new ApiError(
      400,
      `Only Checkout Sessions with a status in ["open"] can be expired. This Checkout Session has a status of "${record.session.status}".`,
      { code: 'checkout_session_not_open' },
    );
  }
  record.session = { ...record.session, status: 'expired', url: null };
  saveState();
  log(`session ${id} expired (${why})`);
  await emitEvent('checkout.session.expired', record);
  return record.session;
}

async function completeSession(id: string): Promise<CheckoutSession> {
  const record = findSession(id);
  const paymentIntent = newId('pi_test_');
  const charge = newId('ch_test_');
  record.session = {
    ...record.session,
    status: 'complete',
    payment_status: 'paid',
    payment_intent: paymentIntent,
    customer_details: {
      email: record.session.customer_email,
      name: null,
      phone: null,
      address: null,
      tax_exempt: 'none',
      tax_ids: [],
    },
    url: null,
  };
  state.payments[paymentIntent] = {
    paymentIntent,
    charge,
    sessionId: id,
    amount: record.session.amount_total,
    currency: record.session.currency,
    refunded: 0,
  };
  saveState();
  log(`session ${id} paid: ${formatMoney(record.session.amount_total, record.session.currency)} as ${paymentIntent}`);
  await emitEvent('checkout.session.completed', record);
  return record.session;
}

// ---------------------------------------------------------------------------------------------
// Refunds

function createRefund(params: Record<string, FormValue>): Refund {
  refuseUnknown(params, ['payment_intent', 'charge', 'amount', 'reason', 'metadata', 'expand']);
  const paymentIntent = asString(params.payment_intent, 'payment_intent');
  const charge = asString(params.charge, 'charge');
  if (!paymentIntent && !charge) {
    throw new ApiError(400, 'One of the following params should be provided for this request: payment_intent or charge.', {
      code: 'parameter_missing',
    });
  }
  if (paymentIntent && charge) throw invalid('charge', 'Pass either payment_intent or charge, not both.');
  const payment = paymentIntent
    ? state.payments[paymentIntent]
    : Object.values(state.payments).find((p) => p.charge === charge);
  if (!payment) {
    throw paymentIntent
      ? new ApiError(400, `No such payment_intent: '${paymentIntent}'`, { code: 'resource_missing', param: 'payment_intent' })
      : new ApiError(400, `No such charge: '${charge}'`, { code: 'resource_missing', param: 'charge' });
  }
  const remaining = payment.amount - payment.refunded;
  if (remaining <= 0) {
    throw new ApiError(400, `Charge ${payment.charge} has already been refunded.`, { code: 'charge_already_refunded' });
  }
  const amount = asInteger(params.amount, 'amount', 1) ?? remaining;
  if (amount > remaining) {
    throw new ApiError(
      400,
      `Refund amount (${formatMoney(amount, payment.currency)}) is greater than unrefunded amount on charge (${formatMoney(remaining, payment.currency)})`,
      { code: 'amount_too_large', param: 'amount' },
    );
  }
  checkChargeAmount(amount, payment.currency, 'amount');
  const reason = asString(params.reason, 'reason') ?? null;
  if (reason !== null && !['duplicate', 'fraudulent', 'requested_by_customer'].includes(reason)) {
    throw invalid('reason', `Invalid reason: must be one of duplicate, fraudulent, or requested_by_customer`);
  }
  const refund: Refund = {
    id: newId('re_test_'),
    object: 'refund',
    amount,
    balance_transaction: null,
    charge: payment.charge,
    created: now(),
    currency: payment.currency,
    destination_details: null,
    metadata: asMetadata(params.metadata, 'metadata'),
    payment_intent: payment.paymentIntent,
    reason,
    receipt_number: null,
    source_transfer_reversal: null,
    status: 'succeeded',
    transfer_reversal: null,
  };
  payment.refunded += amount;
  state.refunds[refund.id] = refund;
  saveState();
  log(`refund ${refund.id}: ${formatMoney(amount, payment.currency)} of ${payment.paymentIntent}`);
  return refund;
}

// ---------------------------------------------------------------------------------------------
// Webhooks: signed with the SDK's own helper, retried with backoff while the app is down or fails.

const retryTimers = new Set<NodeJS.Timeout>();

async function emitEvent(type: string, record: State['sessions'][string]) {
  const event = {
    id: newId('evt_'),
    object: 'event',
    api_version: record.apiVersion,
    created: now(),
    data: { object: record.session },
    livemode: false,
    pending_webhooks: 1,
    request: { id: null, idempotency_key: null },
    type,
  };
  const rec: EventRecord = {
    id: event.id,
    type,
    created: event.created,
    sessionId: record.session.id,
    payload: JSON.stringify(event, null, 2),
    deliveries: [],
    delivered: false,
  };
  state.events.push(rec);
  saveState();
  await deliver(rec);
}

/** One delivery now; on failure, retries continue in the background. Resolves with the first result. */
async function deliver(rec: EventRecord): Promise<boolean> {
  const ok = await attemptDelivery(rec);
  if (!ok) scheduleRetry(rec, 2);
  return ok;
}

async function attemptDelivery(rec: EventRecord): Promise<boolean> {
  const attempt = rec.deliveries.length + 1;
  const delivery: Delivery = { attempt, at: new Date().toISOString() };
  // A fresh timestamp each time, as a real re-delivery carries: the app's 5-minute tolerance then
  // judges when the event was sent, not when it was first made.
  const signature = Stripe.webhooks.generateTestHeaderString({ payload: rec.payload, secret: env.STRIPE_WEBHOOK_SECRET });
  try {
    const res = await fetch(webhookUrl, {
      method: 'POST',
      headers: {
        'content-type': 'application/json; charset=utf-8',
        'stripe-signature': signature,
        'user-agent': 'Fillcard-payment-stand-in/1.0',
      },
      body: rec.payload,
      redirect: 'manual',
      signal: AbortSignal.timeout(10_000),
    });
    await res.arrayBuffer().catch(() => undefined);
    delivery.status = res.status;
  } catch (err) {
    const cause = (err as { cause?: { code?: string } }).cause;
    delivery.error = cause?.code ?? (cause as { message?: string } | undefined)?.message ?? (err as Error).message;
  }
  rec.deliveries.push(delivery);
  const ok = delivery.status !== undefined && delivery.status >= 200 && delivery.status < 300;
  if (ok) rec.delivered = true;
  saveState();
  log(`webhook ${rec.type} ${rec.id} → ${webhookUrl}: ${delivery.status ?? delivery.error}${ok ? '' : ' (failed)'}`);
  return ok;
}

function scheduleRetry(rec: EventRecord, attempt: number) {
  if (attempt > env.PAYMENTS_WEBHOOK_ATTEMPTS) {
    log(`webhook ${rec.type} ${rec.id}: giving up after ${env.PAYMENTS_WEBHOOK_ATTEMPTS} attempts (POST /__resend/${rec.id} to try again)`);
    return;
  }
  const delay = env.PAYMENTS_WEBHOOK_BACKOFF_MS * 2 ** (attempt - 2);
  log(`webhook ${rec.type} ${rec.id}: attempt ${attempt} of ${env.PAYMENTS_WEBHOOK_ATTEMPTS} in ${delay} ms`);
  const timer = setTimeout(() => {
    retryTimers.delete(timer);
    attemptDelivery(rec)
      .then((ok) => {
        if (!ok) scheduleRetry(rec, attempt + 1);
      })
      .catch((err) => log(`webhook ${rec.id}: ${(err as Error).message}`));
  }, delay);
  retryTimers.add(timer);
}

// ---------------------------------------------------------------------------------------------
// The test payment page

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="robots" content="noindex">
<title>${escapeHtml(title)} — test payment</title>
<style>
  body { margin: 0; font: 16px/1.5 system-ui, sans-serif; color: #1d1d1b; background: #f3f1ec; }
  .notice { background: #fff4c2; border-bottom: 2px dashed #8a6d00; padding: .75rem 1rem; text-align: center; }
  .notice strong { display: block; font-size: 1.1rem; }
  main { max-width: 34rem; margin: 2rem auto; padding: 0 1rem; }
  .sheet { background: #fff; border: 1px solid #cfcac0; border-radius: 6px; padding: 1.5rem; }
  h1 { font-size: 1.3rem; margin: 0 0 1rem; }
  table { width: 100%; border-collapse: collapse; margin: 1rem 0; }
  th, td { text-align: left; padding: .4rem 0; border-bottom: 1px solid #e6e2da; vertical-align: top; }
  td.num, th.num { text-align: right; white-space: nowrap; }
  tfoot td { font-weight: 700; border-bottom: none; }
  .muted { color: #5c5950; font-size: .9rem; }
  .actions { display: flex; gap: .75rem; margin-top: 1.25rem; flex-wrap: wrap; }
  button { font: inherit; padding: .6rem 1.2rem; border-radius: 4px; cursor: pointer; border: 2px solid #1d1d1b; }
  button.pay { background: #1d1d1b; color: #fff; }
  button.decline { background: #fff; color: #1d1d1b; }
  button:focus-visible, a:focus-visible { outline: 3px solid #8a6d00; outline-offset: 2px; }
</style>
</head>
<body>
<div class="notice" role="note"><strong>Test payment — no real money moves</strong>
This page stands in for the card payment provider while Fillcard runs locally. Nothing is charged and no card details are asked for.</div>
<main><div class="sheet">
${body}
</div></main>
</body>
</html>`;
}

function sessionPage(record: State['sessions'][string]): string {
  const s = record.session;
  const rows = record.lineItems
    .map((li) => {
      const detail = li.product_description ? `<div class="muted">${escapeHtml(li.product_description)}</div>` : '';
      return `<tr><td>${escapeHtml(li.description)}${detail}</td><td class="num">${li.quantity} × ${escapeHtml(
        formatMoney(li.price.unit_amount, li.currency),
      )}</td><td class="num">${escapeHtml(formatMoney(li.amount_total, li.currency))}</td></tr>`;
    })
    .join('\n');
  const table = `<table>
<thead><tr><th scope="col">Item</th><th scope="col" class="num">Quantity × price</th><th scope="col" class="num">Amount</th></tr></thead>
<tbody>
${rows}
</tbody>
<tfoot><tr><td colspan="2">Total</td><td class="num" data-total>${escapeHtml(formatMoney(s.amount_total, s.currency))}</td></tr></tfoot>
</table>`;
  const who = s.customer_email ? `<p class="muted">Paying as ${escapeHtml(s.customer_email)}</p>` : '';
  if (s.status === 'open') {
    const expires = new Date(s.expires_at * 1000).toUTCString();
    return page(
      'Pay',
      `<h1>Pay ${escapeHtml(formatMoney(s.amount_total, s.currency))}</h1>
${table}
${who}
<p class="muted">This payment link is open until ${escapeHtml(expires)}.</p>
<form method="post" action="/pay/${encodeURIComponent(s.id)}">
<div class="actions">
<button type="submit" name="action" value="pay" class="pay">Pay ${escapeHtml(formatMoney(s.amount_total, s.currency))}</button>
<button type="submit" name="action" value="decline" class="decline">Decline</button>
</div>
</form>`,
    );
  }
  if (s.status === 'complete') {
    return page(
      'Paid',
      `<h1>This test payment is complete</h1>${table}<p><a href="${escapeHtml(successUrl(s))}">Return to the site</a></p>`,
    );
  }
  const back = s.cancel_url ? `<p><a href="${escapeHtml(s.cancel_url)}">Return to the site</a></p>` : '';
  return page('Expired', `<h1>This payment link has expired</h1>${table}<p>Nothing was paid.</p>${back}`);
}

function successUrl(s: CheckoutSession): string {
  return s.success_url.replaceAll('{CHECKOUT_SESSION_ID}', s.id);
}

// ---------------------------------------------------------------------------------------------
// HTTP

const MAX_BODY = 1024 * 1024;

function readBody(req: http.IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on('data', (chunk: Buffer) => {
      size += chunk.length;
      if (size > MAX_BODY) {
        reject(new ApiError(413, 'Request body too large.'));
        req.destroy();
        return;
      }
      chunks.push(chunk);
    });
    req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
    req.on('error', reject);
  });
}

function sendJson(res: http.ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}) {
  const text = JSON.stringify(body, null, 2);
  res.writeHead(status, {
    'content-type': 'application/json',
    'content-length': Buffer.byteLength(text),
    'cache-control': 'no-cache, no-store',
    'request-id': newId('req_', 14),
    ...headers,
  });
  res.end(text);
}

function sendHtml(res: http.ServerResponse, status: number, html: string) {
  res.writeHead(status, {
    'content-type': 'text/html; charset=utf-8',
    'content-length': Buffer.byteLength(html),
    'cache-control': 'no-store',
    'x-frame-options': 'DENY',
    // No form-action here: browsers apply it to the redirect back to the app after Pay as well.
    'content-security-policy': "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'none'",
  });
  res.end(html);
}

function apiKeyOf(req: http.IncomingMessage): string | null {
  const header = req.headers.authorization ?? '';
  const bearer = /^Bearer\s+(\S+)$/i.exec(header);
  if (bearer) return bearer[1];
  const basic = /^Basic\s+(\S+)$/i.exec(header);
  if (basic) return Buffer.from(basic[1], 'base64').toString('utf8').replace(/:$/, '');
  return null;
}

function checkApiKey(req: http.IncomingMessage): string {
  const key = apiKeyOf(req);
  if (!key) {
    throw new ApiError(401, 'You did not provide an API key. Send it in the Authorization header as "Bearer sk_test_…".');
  }
  if (key !== env.STRIPE_SECRET_KEY) {
    const shown = key.length > 12 ? `${key.slice(0, 8)}${'*'.repeat(8)}${key.slice(-4)}` : '****';
    throw new ApiError(401, `Invalid API Key provided: ${shown}`);
  }
  return key;
}

const IDEMPOTENCY_LIFETIME_S = 24 * 3600;

async function handleApi(req: http.IncomingMessage, res: http.ServerResponse, url: URL, body: string) {
  const apiKey = checkApiKey(req);
  const method = req.method ?? 'GET';
  const apiVersion = (req.headers['stripe-version'] as string | undefined) ?? Stripe.API_VERSION;
  const baseHeaders: Record<string, string> = { 'stripe-version': apiVersion };
  const idempotencyKey = method === 'POST' ? (req.headers['idempotency-key'] as string | undefined) : undefined;

  if (idempotencyKey !== undefined) {
    baseHeaders['idempotency-key'] = idempotencyKey;
    if (idempotencyKey.length > 255) throw new ApiError(400, 'Idempotency keys can be at most 255 characters long.');
    const stored = state.idempotency[`${apiKey}\n${idempotencyKey}`];
    if (stored && stored.createdAt > now() - IDEMPOTENCY_LIFETIME_S) {
      if (stored.method !== method || stored.path !== url.pathname || stored.body !== body) {
        throw new ApiError(
          400,
          `Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '${idempotencyKey}' if you meant to execute a different request.`,
          { type: 'idempotency_error' },
        );
      }
      sendJson(res, stored.status, stored.response, { ...baseHeaders, 'idempotent-replayed': 'true' });
      return;
    }
  }

  const params = method === 'GET' ? parseForm(url.search.slice(1)) : parseForm(body);
  const p = url.pathname;
  let m: RegExpExecArray | null;
  let result: unknown;

  if (method === 'POST' && p === '/v1/checkout/sessions') {
    result = createSession(params, apiVersion);
  } else if (method === 'GET' && (m = /^\/v1\/checkout\/sessions\/([^/]+)$/.exec(p))) {
    const id = decodeURIComponent(m[1]);
    await expireIfDue(id);
    const record = findSession(id);
    result = expandable(record.session, record.lineItems, expandParam(params));
  } else if (method === 'GET' && (m = /^\/v1\/checkout\/sessions\/([^/]+)\/line_items$/.exec(p))) {
    const record = findSession(decodeURIComponent(m[1]));
    result = { object: 'list', data: record.lineItems.map(publicLineItem), has_more: false, url: p };
  } else if (method === 'POST' && (m = /^\/v1\/checkout\/sessions\/([^/]+)\/expire$/.exec(p))) {
    const id = decodeURIComponent(m[1]);
    findSession(id);
    result = await expireSession(id, 'expire called');
  } else if (method === 'POST' && p === '/v1/refunds') {
    result = createRefund(params);
  } else if (method === 'GET' && (m = /^\/v1\/refunds\/([^/]+)$/.exec(p))) {
    const id = decodeURIComponent(m[1]);
    const refund = state.refunds[id];
    if (!refund) throw noSuch('refund', id, 'id');
    result = refund;
  } else {
    throw new ApiError(404, `Unrecognized request URL (${method}: ${p}). This test stand-in answers Checkout Session and Refund calls only.`);
  }

  if (idempotencyKey !== undefined) {
    state.idempotency[`${apiKey}\n${idempotencyKey}`] = {
      method, path: p, body, status: 200, response: result, createdAt: now(),
    };
    saveState();
  }
  sendJson(res, 200, result, baseHeaders);
}

async function handlePay(req: http.IncomingMessage, res: http.ServerResponse, id: string, body: string) {
  await expireIfDue(id);
  const record = state.sessions[id];
  if (!record) {
    sendHtml(res, 404, page('Not found', '<h1>No such payment</h1><p>This payment link is not known here.</p>'));
    return;
  }
  if (req.method === 'GET') {
    sendHtml(res, 200, sessionPage(record));
    return;
  }
  const action = new URLSearchParams(body).get('action');
  if (record.session.status !== 'open') {
    sendHtml(res, 409, sessionPage(record));
    return;
  }
  if (action === 'pay') {
    const session = await completeSession(id);
    res.writeHead(303, { location: successUrl(session), 'cache-control': 'no-store' });
    res.end();
  } else if (action === 'decline') {
    const session = await expireSession(id, 'declined on the test payment page');
    if (session.cancel_url) {
      res.writeHead(303, { location: session.cancel_url, 'cache-control': 'no-store' });
      res.end();
    } else {
      sendHtml(res, 200, sessionPage(state.sessions[id]));
    }
  } else {
    sendHtml(res, 400, page('Bad request', '<h1>Choose Pay or Decline</h1>'));
  }
}

async function handle(req: http.IncomingMessage, res: http.ServerResponse) {
  const url = new URL(req.url ?? '/', 'http://stand-in');
  const body = req.method === 'POST' ? await readBody(req) : '';
  const p = url.pathname;
  let m: RegExpExecArray | null;

  if (p.startsWith('/v1/')) return handleApi(req, res, url, body);

  if ((m = /^\/pay\/([^/]+)$/.exec(p)) && (req.method === 'GET' || req.method === 'POST')) {
    return handlePay(req, res, decodeURIComponent(m[1]), body);
  }
  if (req.method === 'GET' && p === '/__health') {
    return sendJson(res, 200, { ok: true, sessions: Object.keys(state.sessions).length, events: state.events.length, webhook_url: webhookUrl });
  }
  if (req.method === 'GET' && p === '/__events') {
    return sendJson(res, 200, {
      object: 'list',
      data: state.events.map((e) => ({
        id: e.id,
        type: e.type,
        created: e.created,
        session_id: e.sessionId,
        delivered: e.delivered,
        deliveries: e.deliveries,
        event: JSON.parse(e.payload) as unknown,
      })),
      has_more: false,
    });
  }
  if (req.method === 'POST' && (m = /^\/__resend\/([^/]+)$/.exec(p))) {
    const rec = state.events.find((e) => e.id === decodeURIComponent(m![1]));
    if (!rec) throw noSuch('event', decodeURIComponent(m[1]), 'id');
    log(`re-delivering ${rec.type} ${rec.id} on request`);
    const delivered = await deliver(rec);
    return sendJson(res, 200, { id: rec.id, delivered, deliveries: rec.deliveries });
  }
  throw new ApiError(404, `Nothing at ${req.method} ${p}`);
}

const server = http.createServer((req, res) => {
  handle(req, res).catch((err: unknown) => {
    if (res.headersSent) {
      res.destroy();
      return;
    }
    if (err instanceof ApiError) {
      sendJson(res, err.status, err.body());
      return;
    }
    log(`error on ${req.method} ${req.url}: ${(err as Error).stack ?? String(err)}`);
    sendJson(res, 500, { error: { type: 'api_error', message: 'The payment stand-in failed; see its log.' } });
  });
});

const sweep = setInterval(() => {
  for (const id of Object.keys(state.sessions)) {
    expireIfDue(id).catch((err) => log(`expiry sweep: ${(err as Error).message}`));
  }
}, 5000);

server.listen(env.PAYMENTS_PORT, HOST, () => {
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : env.PAYMENTS_PORT;
  publicBase ||= `http://${HOST}:${port}`;
  log(`ready on http://${HOST}:${port} (pay pages at ${publicBase}/pay/…, webhooks to ${webhookUrl})`);
});

let stopping = false;
function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  log(`${signal}: stopping`);
  clearInterval(sweep);
  for (const t of retryTimers) clearTimeout(t);
  retryTimers.clear();
  try {
    saveState();
  } catch (err) {
    log(`could not save state: ${(err as Error).message}`);
  }
  server.close(() => process.exit(0));
  server.closeAllConnections();
  setTimeout(() => process.exit(0), 2000).unref();
}
process.on('SIGTERM', () => stop('SIGTERM'));
process.on('SIGINT', () => stop('SIGINT'));
