/**
 * The studio desk against the running app and a real database: the shoots table API, clients,
 * studio settings (with the watermark preview and logo) and light notes.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { randomUUID } from 'node:crypto';
import sharp from 'sharp';
import { db } from '../../src/lib/server/db';
import { Agent } from '../support/http';
import { makeStudio, makeShoot, memberAgent, type TestStudio } from '../support/factories';
import { identify, removeTempFiles } from '../fixtures/image-tools';
import type { DeskShootsPage } from '../../src/lib/schemas/studio';

let A: TestStudio;
let B: TestStudio;
let ownerA: Agent;
let retoucherA: Agent;
let ownerB: Agent;
const anonymous = new Agent();

async function shootFor(studioId: string, o: { client: string; title: string; stage?: string; shotOn?: string; allowance?: number; currency?: string }) {
  const made = await makeShoot(studioId, { stage: o.stage, allowance: o.allowance, currency: o.currency });
  await db()('clients').where({ id: made.client.id }).update({ name: o.client });
  await db()('shoots').where({ id: made.shoot.id }).update({ title: o.title, shot_on: o.shotOn ?? '2026-05-01' });
  return { shootId: made.shoot.id as string, clientId: made.client.id as string };
}

async function addFrames(studioId: string, shootId: string, n: number, picked = 0) {
  const rows = Array.from({ length: n }, (_, i) => ({
    studio_id: studioId, shoot_id: shootId, object_key: `test/${randomUUID()}.jpg`, original_name: `F${i}.jpg`, bytes: 1000, state: 'ready',
  }));
  const frames = await db()('frames').insert(rows).returning('id');
  if (picked) await db()('picks').insert(frames.slice(0, picked).map((f) => ({ studio_id: studioId, shoot_id: shootId, frame_id: f.id })));
}

let attempt = 0;
async function addOrder(studioId: string, shootId: string, totalMinor: number, state: string, currency = 'EUR') {
  await db()('orders').insert({
    attempt: ++attempt,
    studio_id: studioId, shoot_id: shootId, extras: 1, unit_price_minor: totalMinor, net_minor: totalMinor, tax_minor: 0,
    total_minor: totalMinor, currency, tax_rate_bp: 0, tax_mode: 'exclusive', state,
    refunded_minor: state === 'refunded' ? totalMinor : 0, refunded_at: state === 'refunded' ? new Date() : null,
  });
}

async function page(agent: Agent, query: string): Promise<DeskShootsPage & { error?: string }> {
  const res = await agent.get(`/api/desk/shoots${query}`);
  expect(res.status, query).toBe(200);
  return res.json();
}

const ids: Record<string, string> = {};

beforeAll(async () => {
  A = await makeStudio('DeskA');
  B = await makeStudio('DeskB');
  ownerA = await memberAgent(A.owner.email);
  retoucherA = await memberAgent(A.retoucher.email);
  ownerB = await memberAgent(B.owner.email);

  // Studio A: eleven active shoots, one delivered, one archived; names chosen to sort plainly.
  const names = ['Abel Quarry', 'bianca Fenn', 'Corin Vale', 'Dara Holt', 'Esme Lark', 'Fitz Moor', 'Gale Penn', 'Hollis Reed', 'Ivo Stark', 'Juno Tarn', 'Kit Umber'];
  for (const [i, name] of names.entries()) {
    const s = await shootFor(A.studioId, { client: name, title: `Family sitting ${i + 1}`, shotOn: `2026-04-${String(10 + i).padStart(2, '0')}` });
    ids[name] = s.shootId;
  }
  ids.delivered = (await shootFor(A.studioId, { client: 'Lumen Ash', title: 'Graduation portraits', stage: 'delivered', shotOn: '2026-03-02', allowance: 2 })).shootId;
  ids.archived = (await shootFor(A.studioId, { client: 'Mira Oak', title: 'Headshots 2025', stage: 'archived', shotOn: '2025-11-20' })).shootId;
  ids.percent = (await shootFor(A.studioId, { client: 'Nell Pike', title: '100%_natural light', shotOn: '2026-02-01' })).shootId;
  // Studio B has a client whose name would match searches in A.
  ids.other = (await shootFor(B.studioId, { client: 'Abel Quarry', title: 'Family sitting 1', shotOn: '2026-04-10' })).shootId;

  await addFrames(A.studioId, ids['Corin Vale']!, 7, 4);
  await addFrames(A.studioId, ids.delivered!, 3, 3);
  // Paid extras of the delivered shoot: two paid orders count, pending and refunded ones do not.
  await addOrder(A.studioId, ids.delivered!, 2500, 'paid');
  await addOrder(A.studioId, ids.delivered!, 1250, 'paid');
  await addOrder(A.studioId, ids.delivered!, 9900, 'pending');
  await addOrder(A.studioId, ids.delivered!, 7000, 'refunded');
  await addOrder(A.studioId, ids['Dara Holt']!, 500, 'paid');
});

afterAll(() => removeTempFiles());

describe('shoots table API', () => {
  it('answers only members: anonymous callers get 401', async () => {
    expect((await anonymous.get('/api/desk/shoots')).status).toBe(401);
  });

  it('pages through the active shoots, newest first by default, and keeps the page inside the results', async () => {
    const first = await page(ownerA, '?pageSize=10');
    expect(first.total).toBe(13); // 11 + delivered + the "100%" shoot; the archived one is left out
    expect(first.pageCount).toBe(2);
    expect(first.rows).toHaveLength(10);
    const dates = first.rows.map((r) => r.shotOn);
    expect(dates).toEqual([...dates].sort().reverse());
    expect(first.rows[0]!.clientName).toBe('Kit Umber');
    const second = await page(ownerA, '?pageSize=10&page=2');
    expect(second.rows).toHaveLength(3);
    const all = [...first.rows, ...second.rows].map((r) => r.id);
    expect(new Set(all).size).toBe(13);
    expect(all).not.toContain(ids.archived);
    const beyond = await page(ownerA, '?pageSize=10&page=99');
    expect(beyond.page).toBe(2);
    expect(beyond.rows.map((r) => r.id)).toEqual(second.rows.map((r) => r.id));
  });

  it('sorts by every column, both ways', async () => {
    const byClient = await page(ownerA, '?sort=client&dir=asc&pageSize=25');
    const clientNames = byClient.rows.map((r) => r.clientName);
    expect(clientNames).toEqual([...clientNames].sort((a, b) => a.toLowerCase().localeCompare(b.toLowerCase())));
    expect(clientNames[1]).toBe('bianca Fenn'); // case does not push lower-case names to the end

    const byFrames = await page(ownerA, '?sort=frames&dir=desc');
    expect(byFrames.rows.slice(0, 2).map((r) => [r.clientName, r.frames])).toEqual([['Corin Vale', 7], ['Lumen Ash', 3]]);
    const byPicks = await page(ownerA, '?sort=picks&dir=desc');
    expect(byPicks.rows.slice(0, 2).map((r) => [r.clientName, r.picks, r.allowance])).toEqual([['Corin Vale', 4, 3], ['Lumen Ash', 3, 2]]);

    const byStage = await page(ownerA, '?sort=stage&dir=desc&stage=all');
    expect(byStage.rows.slice(0, 2).map((r) => r.stage)).toEqual(['archived', 'delivered']);
    const byStageAsc = await page(ownerA, '?sort=stage&dir=asc&stage=all');
    expect(byStageAsc.rows.at(-1)!.stage).toBe('archived');

    const byTitle = await page(ownerA, '?sort=title&dir=asc');
    expect(byTitle.rows[0]!.title).toBe('100%_natural light');
    const byDateAsc = await page(ownerA, '?sort=date&dir=asc');
    expect(byDateAsc.rows[0]!.title).toBe('100%_natural light');
    const byExpiry = await page(ownerA, '?sort=expiry&dir=asc');
    const expiries = byExpiry.rows.map((r) => r.proofExpiresAt);
    expect(expiries).toEqual([...expiries].sort());

    const byExtras = await page(ownerA, '?sort=extras&dir=desc');
    expect(byExtras.rows.slice(0, 2).map((r) => [r.clientName, r.extrasPaidMinor, r.currency])).toEqual([
      ['Lumen Ash', 3750, 'EUR'], // 25.00 + 12.50 paid; the pending and refunded orders do not count
      ['Dara Holt', 500, 'EUR'],
    ]);
  });

  it('filters by stage: active by default, one stage, or all', async () => {
    expect((await page(ownerA, '?stage=delivered')).rows.map((r) => r.id)).toEqual([ids.delivered]);
    expect((await page(ownerA, '?stage=archived')).rows.map((r) => r.id)).toEqual([ids.archived]);
    expect((await page(ownerA, '?stage=all')).total).toBe(14);
    const none = await page(ownerA, '?stage=retouching');
    expect(none.total).toBe(0);
    expect(none.studioHasShoots).toBe(true);
  });

  it('searches client names and titles case-insensitively, with % and _ matched as themselves', async () => {
    expect((await page(ownerA, '?q=CORIN')).rows.map((r) => r.clientName)).toEqual(['Corin Vale']);
    expect((await page(ownerA, '?q=graduation')).rows.map((r) => r.id)).toEqual([ids.delivered]);
    expect((await page(ownerA, '?q=%25_')).rows.map((r) => r.id)).toEqual([ids.percent]); // "%_"
    expect((await page(ownerA, '?q=_')).rows.map((r) => r.id)).toEqual([ids.percent]);
    expect((await page(ownerA, '?q=%25')).rows.map((r) => r.id)).toEqual([ids.percent]);
    expect((await page(ownerA, '?q=Mira')).total).toBe(0); // archived: only with stage=all
    expect((await page(ownerA, '?q=Mira&stage=all')).rows.map((r) => r.id)).toEqual([ids.archived]);
    expect((await page(ownerA, '?q=sitting&pageSize=50')).total).toBe(11);
  });

  it('is scoped to the studio: owner B never sees studio A’s shoots', async () => {
    const b = await page(ownerB, '?stage=all&pageSize=100');
    expect(b.rows.map((r) => r.id)).toEqual([ids.other]);
    const search = await page(ownerB, '?q=Abel&stage=all');
    expect(search.rows.map((r) => r.id)).toEqual([ids.other]);
    const a = await page(ownerA, '?q=Abel');
    expect(a.rows.map((r) => r.id)).toEqual([ids['Abel Quarry']]);
  });

  it('gives a retoucher no money: no money fields, and no sorting by money', async () => {
    const r = await page(retoucherA, '?stage=all&pageSize=100');
    expect(r.showMoney).toBe(false);
    expect(r.total).toBe(14);
    for (const row of r.rows) {
      expect(Object.keys(row)).not.toContain('extrasPaidMinor');
      expect(Object.keys(row)).not.toContain('currency');
    }
    const raw = await (await retoucherA.get('/api/desk/shoots?stage=delivered')).text();
    expect(raw).not.toMatch(/extras|3750|currency/i);
    const sorted = await retoucherA.get('/api/desk/shoots?sort=extras');
    expect(sorted.status).toBe(403);
    const owner = await page(ownerA, '?stage=delivered');
    expect(owner.showMoney).toBe(true);
    expect(owner.rows[0]!.extrasPaidMinor).toBe(3750);
  });

  it('refuses unknown sort columns, directions, stages and page sizes with 422', async () => {
    for (const q of ['?sort=password_hash', '?sort=s.id;drop', '?dir=sideways', '?stage=lost', '?pageSize=7', '?page=0']) {
      const res = await ownerA.get(`/api/desk/shoots${q}`);
      expect(res.status, q).toBe(422);
      expect((await res.json()).error).toBeTruthy();
    }
  });
});

describe('clients', () => {
  let clientId: string;

  it('creates a client with the shared e-mail check; a bad e-mail is 422', async () => {
    const bad = await ownerA.postJson('/api/clients', { name: 'Orla Finch', email: 'orla-at-example', phone: '', notes: '' });
    expect(bad.status).toBe(422);
    expect((await bad.json()).error).toContain('Enter a valid e-mail address.');
    const badPhone = await ownerA.postJson('/api/clients', { name: 'Orla Finch', email: 'orla@example.test', phone: 'call me' });
    expect(badPhone.status).toBe(422);
    const noName = await ownerA.postJson('/api/clients', { name: '  ', email: 'orla@example.test' });
    expect(noName.status).toBe(422);

    const res = await ownerA.postJson('/api/clients', { name: 'Orla Finch', email: '  Orla.Finch@Example.TEST ', phone: '+44 20 7946 0000', notes: 'Prefers mornings.' });
    expect(res.status).toBe(201);
    const body = await res.json();
    clientId = body.client.id;
    expect(body.client).toMatchObject({ name: 'Orla Finch', email: 'orla.finch@example.test', phone: '+44 20 7946 0000', notes: 'Prefers mornings.', shoots: 0 });
    expect(body.url).toBe(`/desk/clients/${clientId}`);
  });

  it('lists and searches by name or e-mail, studio-scoped', async () => {
    const list = await (await ownerA.get('/api/clients?q=finch')).json();
    expect(list.clients.map((c: { id: string }) => c.id)).toEqual([clientId]);
    const byMail = await (await ownerA.get('/api/clients?q=orla.finch@')).json();
    expect(byMail.clients).toHaveLength(1);
    const fromB = await (await ownerB.get('/api/clients?q=finch')).json();
    expect(fromB.clients).toEqual([]);
  });

  it('edits a client; other studios and retouchers cannot reach it', async () => {
    const res = await ownerA.postJson(`/api/clients/${clientId}`, { name: 'Orla Finch-Reyes', email: 'orla@example.test', phone: '', notes: '' }, 'PUT');
    expect(res.status).toBe(200);
    const row = await db()('clients').where({ id: clientId }).first();
    expect(row).toMatchObject({ name: 'Orla Finch-Reyes', email: 'orla@example.test', phone: null, notes: null });
    const badMail = await ownerA.postJson(`/api/clients/${clientId}`, { name: 'Orla', email: 'no' }, 'PUT');
    expect(badMail.status).toBe(422);

    expect((await ownerB.get(`/api/clients/${clientId}`)).status).toBe(404);
    expect((await ownerB.postJson(`/api/clients/${clientId}`, { name: 'X', email: 'x@example.test' }, 'PUT')).status).toBe(404);
    expect((await ownerB.fetch(`/api/clients/${clientId}`, { method: 'DELETE' })).status).toBe(404);
    expect((await retoucherA.get('/api/clients')).status).toBe(403);
    expect((await retoucherA.postJson('/api/clients', { name: 'R', email: 'r@example.test' })).status).toBe(403);
    expect((await anonymous.get('/api/clients')).status).toBe(401);
    expect((await db()('clients').where({ id: clientId }).first('name')).name).toBe('Orla Finch-Reyes');
  });

  it('refuses to delete a client with shoots that are not archived (409), archives one whose shoots are', async () => {
    const { shootId, clientId: withShoots } = await shootFor(A.studioId, { client: 'Pia Rowan', title: 'Newborn at home', stage: 'delivered' });
    const refused = await ownerA.fetch(`/api/clients/${withShoots}`, { method: 'DELETE' });
    expect(refused.status).toBe(409);
    expect((await refused.json()).error).toContain('archive their shoots first');
    expect(await db()('clients').where({ id: withShoots }).first('archived_at')).toEqual({ archived_at: null });

    await db()('shoots').where({ id: shootId }).update({ stage: 'archived' });
    await db()('clients').where({ id: withShoots }).update({ phone: '0123 456', notes: 'Twins' });
    const archived = await ownerA.fetch(`/api/clients/${withShoots}`, { method: 'DELETE' });
    expect(archived.status).toBe(200);
    expect(await archived.json()).toEqual({ outcome: 'archived' });
    const row = await db()('clients').where({ id: withShoots }).first();
    expect(row.archived_at).not.toBeNull();
    expect(row.phone).toBeNull();
    expect(row.notes).toBeNull();
    const current = await (await ownerA.get('/api/clients?q=Pia')).json();
    expect(current.clients).toEqual([]);
    const arch = await (await ownerA.get('/api/clients?q=Pia&archived=1')).json();
    expect(arch.clients.map((c: { id: string }) => c.id)).toEqual([withShoots]);
  });

  it('deletes a client with no shoots outright', async () => {
    const res = await ownerA.fetch(`/api/clients/${clientId}`, { method: 'DELETE' });
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ outcome: 'deleted' });
    expect(await db()('clients').where({ id: clientId }).first()).toBeUndefined();
    expect((await ownerA.get(`/api/clients/${clientId}`)).status).toBe(404);
    const audit = await db()('audit_log').where({ subject_id: clientId }).orderBy('id').pluck('action');
    expect(audit).toEqual(['client.created', 'client.updated', 'client.deleted']);
  });
});

describe('studio settings', () => {
  const valid = {
    name: 'Harbour Light Portraits',
    contactEmail: 'hello@harbour.example.test',
    contactPhone: '+1 555 0100',
    brandColour: '#2f5d62',
    watermarkText: 'HARBOUR LIGHT',
    watermarkOpacityPct: 40,
    defaultAllowance: 12,
    defaultExtraPrice: '25.50',
    defaultCurrency: 'EUR',
    taxRatePct: 7.7,
    taxMode: 'inclusive',
    proofExpiryDays: 21,
    downloadExpiryDays: 90,
    retentionDays: 730,
  };
  const put = (agent: Agent, body: unknown) => agent.postJson('/api/studio/settings', body, 'PUT');

  it('is for owners only', async () => {
    expect((await retoucherA.get('/api/studio/settings')).status).toBe(403);
    expect((await put(retoucherA, valid)).status).toBe(403);
    expect((await anonymous.get('/api/studio/settings')).status).toBe(401);
    expect((await put(anonymous, valid)).status).toBe(401);
  });

  it('saves prices in minor units, tax in basis points and opacity as a fraction', async () => {
    const res = await put(ownerA, valid);
    expect(res.status).toBe(200);
    const row = await db()('studios').where({ id: A.studioId }).first();
    expect(row).toMatchObject({
      name: 'Harbour Light Portraits', contact_email: 'hello@harbour.example.test', brand_colour: '#2f5d62',
      watermark_text: 'HARBOUR LIGHT', default_allowance: 12, default_extra_price_minor: 2550, default_currency: 'EUR',
      tax_rate_bp: 770, tax_mode: 'inclusive', proof_expiry_days: 21, download_expiry_days: 90, retention_days: 730,
    });
    expect(Number(row.watermark_opacity)).toBe(0.4);
    const back = (await (await ownerA.get('/api/studio/settings')).json()).settings;
    expect(back).toMatchObject({ ...valid, hasLogo: false });
    // The other studio is untouched.
    expect((await db()('studios').where({ id: B.studioId }).first('name')).name).not.toBe('Harbour Light Portraits');

    // ISO 4217: JPY has no minor unit, so "3000" is 3000 minor units.
    expect((await put(ownerA, { ...valid, defaultCurrency: 'JPY', defaultExtraPrice: '3000' })).status).toBe(200);
    expect((await db()('studios').where({ id: A.studioId }).first('default_extra_price_minor')).default_extra_price_minor).toBe(3000);
    const yenCents = await put(ownerA, { ...valid, defaultCurrency: 'JPY', defaultExtraPrice: '25.50' });
    expect(yenCents.status).toBe(422);
    expect((await yenCents.json()).error).toContain('JPY has no minor unit');
  });

  it('refuses a malformed brand colour', async () => {
    for (const brandColour of ['red', '#12345', '#1234567', 'a4492b', '#gg0000']) {
      const res = await put(ownerA, { ...valid, brandColour });
      expect(res.status, brandColour).toBe(422);
    }
  });

  // WCAG 2.1 SC 1.4.3: 4.5:1 for normal text. #777777 on white is about 4.48:1 and #767676 about
  // 4.54:1 (values from memory; the contrast unit tests derive them from the luminance definition).
  it('refuses a brand colour that fails AA for white button text, naming the ratio', async () => {
    const res = await put(ownerA, { ...valid, brandColour: '#777777' });
    expect(res.status).toBe(422);
    const { error } = await res.json();
    expect(error).toContain('4.47:1'); // 4.478… cut, not rounded, so it never reads as passing
    expect(error).toContain('4.5:1');
    const light = await put(ownerA, { ...valid, brandColour: '#e9c9b9' });
    expect(light.status).toBe(422);
    expect((await put(ownerA, { ...valid, brandColour: '#767676' })).status).toBe(200);
    expect((await put(ownerA, { ...valid, brandColour: '#A4492B' })).status).toBe(200);
    expect((await db()('studios').where({ id: A.studioId }).first('brand_colour')).brand_colour).toBe('#a4492b');
  });

  it('keeps opacity within 5–90 %, known currencies and sane numbers', async () => {
    for (const [body, field] of [
      [{ watermarkOpacityPct: 4 }, 'watermarkOpacityPct'],
      [{ watermarkOpacityPct: 91 }, 'watermarkOpacityPct'],
      [{ watermarkOpacityPct: 33.5 }, 'watermarkOpacityPct'],
      [{ defaultCurrency: 'XYZ' }, 'defaultCurrency'],
      [{ defaultCurrency: 'KWD', defaultExtraPrice: '7.125' }, 'defaultCurrency'],
      [{ taxRatePct: 101 }, 'taxRatePct'],
      [{ taxRatePct: 7.125 }, 'taxRatePct'],
      [{ taxMode: 'both' }, 'taxMode'],
      [{ retentionDays: 10 }, 'retentionDays'],
      [{ proofExpiryDays: 0 }, 'proofExpiryDays'],
      [{ defaultExtraPrice: '-5' }, 'defaultExtraPrice'],
      [{ defaultExtraPrice: '1,000.00' }, 'defaultExtraPrice'],
      [{ contactEmail: 'not-mail' }, 'contactEmail'],
      [{ watermarkText: '' }, 'watermarkText'],
    ] as const) {
      const res = await put(ownerA, { ...valid, ...body });
      expect(res.status, JSON.stringify(body)).toBe(422);
      expect((await res.json()).issues[0].path[0], JSON.stringify(body)).toBe(field);
    }
    expect((await put(ownerA, { ...valid, watermarkOpacityPct: 5 })).status).toBe(200);
    expect((await put(ownerA, { ...valid, watermarkOpacityPct: 90, contactEmail: '' })).status).toBe(200);
  });
});

describe('watermark preview and logo', () => {
  it('draws a sample proof with the real overlay; a different opacity gives a different picture', async () => {
    const faint = await ownerA.get('/api/studio/watermark-preview?text=HARBOUR&opacity=10');
    expect(faint.status).toBe(200);
    expect(faint.headers.get('content-type')).toBe('image/jpeg');
    const faintBytes = Buffer.from(await faint.arrayBuffer());
    expect(await identify(faintBytes, '%m %w %h')).toBe('JPEG 640 800');
    const strong = Buffer.from(await (await ownerA.get('/api/studio/watermark-preview?text=HARBOUR&opacity=90')).arrayBuffer());
    expect(await identify(strong, '%m %w %h')).toBe('JPEG 640 800');
    expect(Buffer.compare(faintBytes, strong)).not.toBe(0);
    expect((await ownerA.get('/api/studio/watermark-preview?text=X&opacity=95')).status).toBe(422);
    expect((await retoucherA.get('/api/studio/watermark-preview?text=X&opacity=30')).status).toBe(403);
  });

  it('takes a PNG logo of at most 2 MB by its signature, and refuses others', async () => {
    const logo = await sharp({ create: { width: 200, height: 80, channels: 4, background: { r: 255, g: 255, b: 255, alpha: 0.9 } } }).png().toBuffer();
    const jpeg = await sharp({ create: { width: 20, height: 20, channels: 3, background: '#888' } }).jpeg().toBuffer();
    const upload = (body: Buffer, type = 'image/png') => ownerA.fetch('/api/studio/watermark-logo', { method: 'PUT', headers: { 'content-type': type }, body: new Uint8Array(body) });

    const notPng = await upload(jpeg);
    expect(notPng.status).toBe(422);
    expect((await notPng.json()).error).toContain('PNG');
    const text = await upload(Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"></svg>'));
    expect(text.status).toBe(422);
    const huge = await upload(Buffer.concat([logo, Buffer.alloc(2 * 1024 * 1024)]));
    expect(huge.status).toBe(413);
    expect((await retoucherA.fetch('/api/studio/watermark-logo', { method: 'PUT', body: new Uint8Array(logo) })).status).toBe(403);

    const ok = await upload(logo);
    expect(ok.status).toBe(200);
    const key = (await db()('studios').where({ id: A.studioId }).first('watermark_logo_key')).watermark_logo_key as string;
    expect(key).toMatch(new RegExp(`^studios/${A.studioId}/assets/`));
    const withLogo = Buffer.from(await (await ownerA.get('/api/studio/watermark-preview?text=HARBOUR&opacity=60&logo=1')).arrayBuffer());
    const withText = Buffer.from(await (await ownerA.get('/api/studio/watermark-preview?text=HARBOUR&opacity=60&logo=0')).arrayBuffer());
    expect(Buffer.compare(withLogo, withText)).not.toBe(0);

    expect((await ownerA.fetch('/api/studio/watermark-logo', { method: 'DELETE' })).status).toBe(200);
    expect((await db()('studios').where({ id: A.studioId }).first('watermark_logo_key')).watermark_logo_key).toBeNull();
  });
});

describe('light notes', () => {
  const notes = {
    room: { widthM: 4, depthM: 5 },
    subject: { x: 2, y: 3 },
    sources: [
      { id: 's1', kind: 'flash', label: 'Key flash', power: 4, x: 1, y: 2, aimsAt: 'subject', modifier: 'octa' },
      { id: 's2', kind: 'bounce_board', label: 'Fill board', x: 2.8, y: 3, aimsAt: 'subject' },
    ],
    keyId: 's1',
    fillId: 's2',
    camera: { shutterS: 1 / 200, fNumber: 8, iso: 100, focalLengthMm: 85 },
    notes: 'Backdrop 1 m behind.',
  };
  const url = (id: string) => `/api/shoots/${id}/light-notes`;

  it('saves valid notes for the owner and reads them back', async () => {
    const res = await ownerA.postJson(url(ids['Esme Lark']!), notes, 'PUT');
    expect(res.status).toBe(200);
    const row = await db()('shoots').where({ id: ids['Esme Lark'] }).first('light_notes');
    expect(row.light_notes).toEqual(notes);
    const back = await (await retoucherA.get(url(ids['Esme Lark']!))).json();
    expect(back.lightNotes).toEqual(notes);
    const audit = await db()('audit_log').where({ subject_id: ids['Esme Lark'], action: 'shoot.light_notes_saved' }).first();
    expect(audit).toBeTruthy();
  });

  it('refuses notes the schema refuses (422), with the reason', async () => {
    const outside = await ownerA.postJson(url(ids['Esme Lark']!), { ...notes, subject: { x: 9, y: 1 } }, 'PUT');
    expect(outside.status).toBe(422);
    expect((await outside.json()).error).toContain('inside the room');
    const boardPower = await ownerA.postJson(url(ids['Esme Lark']!), { ...notes, sources: [{ ...notes.sources[1], power: 2 }], keyId: undefined, fillId: undefined }, 'PUT');
    expect(boardPower.status).toBe(422);
    expect((await ownerA.postJson(url(ids['Esme Lark']!), { room: 'big' }, 'PUT')).status).toBe(422);
    const notJson = await ownerA.fetch(url(ids['Esme Lark']!), { method: 'PUT', headers: { 'content-type': 'application/json' }, body: '{oops' });
    expect(notJson.status).toBe(400);
    // Nothing of the refused bodies was stored.
    expect((await db()('shoots').where({ id: ids['Esme Lark'] }).first('light_notes')).light_notes).toEqual(notes);
  });

  it('is owner-only to change, and another studio’s shoot looks missing', async () => {
    expect((await retoucherA.postJson(url(ids['Fitz Moor']!), notes, 'PUT')).status).toBe(403);
    expect((await ownerB.postJson(url(ids['Fitz Moor']!), notes, 'PUT')).status).toBe(404);
    expect((await ownerB.get(url(ids['Fitz Moor']!))).status).toBe(404);
    expect((await anonymous.postJson(url(ids['Fitz Moor']!), notes, 'PUT')).status).toBe(401);
    expect((await ownerA.postJson(url('not-a-uuid'), notes, 'PUT')).status).toBe(404);
    expect((await db()('shoots').where({ id: ids['Fitz Moor'] }).first('light_notes')).light_notes).toEqual({});
  });
});
