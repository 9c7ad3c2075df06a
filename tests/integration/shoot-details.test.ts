/**
 * Changing a shoot's details after it was created, against the running app and the real database:
 * who may (owners only, their own studio: OWASP WSTG-ATHZ-02/04), what may change at which point
 * (package terms are fixed once picks are sent or a payment for extras is under way), what a new
 * passcode or a moved expiry means for a client already in the gallery, and hostile input
 * (OWASP WSTG-INPV-01 stored script, ASVS 5.0 1.2 output encoding) refused with nothing changed.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { Agent } from '../support/http';
import { makeStudio, makeShoot, memberAgent, clientAgent, type TestStudio } from '../support/factories';
import { db } from '../../src/lib/server/db';

const patch = (a: Agent, shootId: string, body: unknown) => a.postJson(`/api/shoots/${shootId}`, body, 'PATCH');
/** A UTC calendar day `offset` days from now, as the date fields take it. */
const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);

/** Everything the details form can change, read straight from the database. */
async function stored(shootId: string) {
  return db()('shoots').where({ id: shootId }).first(
    'title', db().raw(`to_char(shot_on, 'YYYY-MM-DD') AS shot_on`), 'proof_expires_at', 'passcode_hash', 'allowance', 'extra_price_minor',
    'currency', 'tax_rate_bp', 'tax_mode', 'updated_at',
  );
}

async function addOrder(shoot: { id: string; studio_id: string }, state: 'pending' | 'paid' | 'expired' | 'refunded') {
  await db()('orders').insert({
    studio_id: shoot.studio_id, shoot_id: shoot.id, extras: 1, unit_price_minor: 2500, net_minor: 2500, tax_minor: 0, total_minor: 2500,
    currency: 'EUR', tax_rate_bp: 0, tax_mode: 'exclusive', state, ...(state === 'refunded' ? { refunded_minor: 2500 } : {}),
    attempt: Math.floor(Math.random() * 1_000_000) + 1,
  });
}

describe('shoot details: changing them', () => {
  let studio: TestStudio;
  let owner: Agent;
  beforeAll(async () => {
    studio = await makeStudio('Details');
    owner = await memberAgent(studio.owner.email);
  });

  it('lets the owner change every field, keeps money in minor units and records only the field names', async () => {
    const { shoot } = await makeShoot(studio.studioId);
    const res = await patch(owner, shoot.id, {
      title: '  Garden portraits, late summer  ',
      shotOn: '2026-08-30',
      proofExpiresOn: day(30),
      allowance: 12,
      extraPriceMinor: 1850,
      currency: 'GBP',
      taxRateBp: 2000,
      taxMode: 'inclusive',
      passcode: 'meadow-42',
    });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.changed.sort()).toEqual(['allowance', 'currency', 'extraPriceMinor', 'passcode', 'proofExpiresOn', 'shotOn', 'taxMode', 'taxRateBp', 'title'].sort());
    expect(body.details).toMatchObject({ title: 'Garden portraits, late summer', shotOn: '2026-08-30', proofExpiresOn: day(30), hasPasscode: true, allowance: 12, extraPriceMinor: 1850, currency: 'GBP', taxRateBp: 2000, taxMode: 'inclusive', termsLocked: null });

    const row = await stored(shoot.id);
    expect(row).toMatchObject({ title: 'Garden portraits, late summer', shot_on: '2026-08-30', allowance: 12, extra_price_minor: 1850, currency: 'GBP', tax_rate_bp: 2000, tax_mode: 'inclusive' });
    // The proofs close at the end of the chosen day in UTC, as at creation.
    expect(new Date(row.proof_expires_at).toISOString()).toBe(`${day(30)}T23:59:59.000Z`);
    expect(row.passcode_hash).toMatch(/^\$argon2/);
    expect(row.passcode_hash).not.toContain('meadow-42');

    const log = await db()('audit_log').where({ subject_id: shoot.id, action: 'shoot.updated' }).select('details', 'actor_id');
    expect(log).toHaveLength(1);
    expect(log[0].actor_id).toBe(studio.owner.id);
    expect(log[0].details.changed).toContain('passcode');
    expect(log[0].details.passcode).toBe('set');
    expect(JSON.stringify(log[0].details)).not.toContain('meadow-42');
  });

  it('changes only the fields sent, one at a time, and records nothing when nothing changed', async () => {
    const { shoot } = await makeShoot(studio.studioId, { allowance: 3, extraPriceMinor: 2500 });
    const before = await stored(shoot.id);
    const one = await patch(owner, shoot.id, { allowance: 5 });
    expect(one.status).toBe(200);
    expect((await one.json()).changed).toEqual(['allowance']);
    const after = await stored(shoot.id);
    expect({ ...after, allowance: 3, updated_at: null }).toEqual({ ...before, updated_at: null });

    // The same values again (as the form sends the whole package) are no change at all.
    const same = await patch(owner, shoot.id, { allowance: 5, extraPriceMinor: 2500, currency: 'EUR', taxRateBp: 0, taxMode: 'exclusive', title: shoot.title });
    expect(same.status).toBe(200);
    expect((await same.json()).changed).toEqual([]);
    const logged = await db()('audit_log').where({ subject_id: shoot.id, action: 'shoot.updated' }).count('* as n').first();
    expect(Number(logged?.n)).toBe(1);
  });

  it('reads a price in the currency it is sent with: a change of currency needs the price too', async () => {
    const { shoot } = await makeShoot(studio.studioId, { extraPriceMinor: 2500, currency: 'EUR' });
    const bare = await patch(owner, shoot.id, { currency: 'JPY' });
    expect(bare.status).toBe(422);
    expect((await bare.json()).error).toMatch(/price per extra retouch in the new currency/);
    expect((await stored(shoot.id)).currency).toBe('EUR');
    // JPY has no minor unit (ISO 4217 List One): ¥3000 is stored as 3000.
    const yen = await patch(owner, shoot.id, { currency: 'JPY', extraPriceMinor: 3000 });
    expect(yen.status).toBe(200);
    expect(await stored(shoot.id)).toMatchObject({ currency: 'JPY', extra_price_minor: 3000 });
  });

  it('lets the expiry move earlier or later but not into the past', async () => {
    const { shoot } = await makeShoot(studio.studioId, { proofExpiresInDays: 20 });
    expect((await patch(owner, shoot.id, { proofExpiresOn: day(3) })).status).toBe(200);
    expect((await patch(owner, shoot.id, { proofExpiresOn: day(0) })).status).toBe(200);
    expect(new Date((await stored(shoot.id)).proof_expires_at).toISOString()).toBe(`${day(0)}T23:59:59.000Z`);
    const past = await patch(owner, shoot.id, { proofExpiresOn: day(-1) });
    expect(past.status).toBe(422);
    expect((await past.json()).error).toMatch(/cannot close in the past/);
    expect(new Date((await stored(shoot.id)).proof_expires_at).toISOString()).toBe(`${day(0)}T23:59:59.000Z`);
  });
});

describe('shoot details: who may change them', () => {
  it('refuses a retoucher (403) and the owner of another studio (404), changing nothing', async () => {
    const a = await makeStudio('DetailsA');
    const b = await makeStudio('DetailsB');
    const { shoot } = await makeShoot(a.studioId);
    const before = await stored(shoot.id);
    const retoucher = await memberAgent(a.retoucher.email);
    const other = await memberAgent(b.owner.email);
    expect((await patch(retoucher, shoot.id, { title: 'Retitled by the retoucher' })).status).toBe(403);
    const res = await patch(other, shoot.id, { title: 'Retitled by another studio' });
    expect(res.status).toBe(404);
    expect((await res.json()).error).toBe('No such shoot.');
    expect((await new Agent().postJson(`/api/shoots/${shoot.id}`, { title: 'Anonymous' }, 'PATCH')).status).toBe(401);
    expect(await stored(shoot.id)).toEqual(before);
    // The page follows the same rule: the retoucher has no Details tab and no page.
    expect((await retoucher.get(`/desk/shoots/${shoot.id}/details`)).status).toBe(403);
    expect(await (await retoucher.get(`/desk/shoots/${shoot.id}`)).text()).not.toContain('/details"');
    expect((await other.get(`/desk/shoots/${shoot.id}/details`)).status).toBe(404);
  });
});

describe('shoot details: package terms are fixed once the client has committed', () => {
  let studio: TestStudio;
  let owner: Agent;
  beforeAll(async () => {
    studio = await makeStudio('Terms');
    owner = await memberAgent(studio.owner.email);
  });

  it('refuses terms after the picks are sent, but still takes the title and expiry', async () => {
    const { shoot } = await makeShoot(studio.studioId, { allowance: 3 });
    await db()('shoots').where({ id: shoot.id }).update({ picks_submitted_at: new Date() });
    const res = await patch(owner, shoot.id, { allowance: 10 });
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/client sent their picks on .* Reopen the picks/);
    expect((await stored(shoot.id)).allowance).toBe(3);
    // Unchanged terms sent along with a new title are no change, so the title goes through.
    const ok = await patch(owner, shoot.id, { title: 'Retitled after picks', allowance: 3, proofExpiresOn: day(40) });
    expect(ok.status).toBe(200);
    expect((await ok.json()).details.termsLocked).toMatch(/sent their picks/);
    expect((await stored(shoot.id)).title).toBe('Retitled after picks');
    const page = await (await owner.get(`/desk/shoots/${shoot.id}/details`)).text();
    expect(page).toContain('sent their picks');
  });

  it('refuses terms while a payment is in progress and once extras are paid; an expired or refunded order does not hold them', async () => {
    const pending = (await makeShoot(studio.studioId)).shoot;
    await addOrder(pending, 'pending');
    const p = await patch(owner, pending.id, { extraPriceMinor: 9900 });
    expect(p.status).toBe(409);
    expect((await p.json()).error).toMatch(/payment for extra retouches in progress/);
    expect((await stored(pending.id)).extra_price_minor).toBe(2500);

    const paid = (await makeShoot(studio.studioId)).shoot;
    await addOrder(paid, 'paid');
    const q = await patch(owner, paid.id, { taxRateBp: 2000 });
    expect(q.status).toBe(409);
    expect((await q.json()).error).toMatch(/has paid for extra retouches/);
    expect((await stored(paid.id)).tax_rate_bp).toBe(0);

    const past = (await makeShoot(studio.studioId)).shoot;
    await addOrder(past, 'expired');
    await addOrder(past, 'refunded');
    expect((await patch(owner, past.id, { taxMode: 'inclusive' })).status).toBe(200);
  });

  it('refuses terms once retouching has started, and any change to an archived shoot', async () => {
    const retouching = (await makeShoot(studio.studioId, { stage: 'retouching' })).shoot;
    const r = await patch(owner, retouching.id, { allowance: 9 });
    expect(r.status).toBe(409);
    expect((await r.json()).error).toMatch(/Retouching has started/);
    expect((await patch(owner, retouching.id, { title: 'Still fine to rename' })).status).toBe(200);

    const archived = (await makeShoot(studio.studioId, { stage: 'archived' })).shoot;
    const before = await stored(archived.id);
    const a = await patch(owner, archived.id, { title: 'Renamed in the archive' });
    expect(a.status).toBe(409);
    expect((await a.json()).error).toMatch(/archived/);
    expect(await stored(archived.id)).toEqual(before);
  });
});

describe('shoot details: what the client meets', () => {
  let studio: TestStudio;
  let owner: Agent;
  beforeAll(async () => {
    studio = await makeStudio('Visitor');
    owner = await memberAgent(studio.owner.email);
  });

  it('a changed passcode sends a client already in the gallery back to the passcode screen; only the new one opens it', async () => {
    const { shoot, token } = await makeShoot(studio.studioId, { passcode: 'first-code' });
    const client = await clientAgent(token, 'first-code');
    expect((await client.get(`/gallery/${shoot.id}`)).status).toBe(200);

    expect((await patch(owner, shoot.id, { passcode: 'second-code' })).status).toBe(200);
    const back = await client.get(`/gallery/${shoot.id}`);
    expect(back.status).toBe(303);
    expect(back.headers.get('location')).toBe(`/gallery/${shoot.id}/passcode`);
    expect((await client.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(403);

    const old = await client.postForm(`/gallery/${shoot.id}/passcode`, { passcode: 'first-code' });
    expect(old.status).not.toBe(303);
    expect((await client.postForm(`/gallery/${shoot.id}/passcode`, { passcode: 'second-code' })).status).toBe(303);
    expect((await client.get(`/gallery/${shoot.id}`)).status).toBe(200);
    const log = await db()('audit_log').where({ subject_id: shoot.id, action: 'shoot.updated' }).first('details');
    expect(log.details).toEqual({ changed: ['passcode'], passcode: 'changed' });
  });

  it('the same passcode again changes nothing; removing it lets a waiting client in', async () => {
    const { shoot, token } = await makeShoot(studio.studioId, { passcode: 'keep-this' });
    const inside = await clientAgent(token, 'keep-this');
    const same = await patch(owner, shoot.id, { passcode: 'keep-this' });
    expect((await same.json()).changed).toEqual([]);
    expect((await inside.get(`/gallery/${shoot.id}`)).status).toBe(200);

    const waiting = await clientAgent(token);
    expect((await waiting.get(`/gallery/${shoot.id}`)).status).toBe(303);
    const res = await patch(owner, shoot.id, { passcode: '' });
    expect((await res.json()).details.hasPasscode).toBe(false);
    expect((await stored(shoot.id)).passcode_hash).toBeNull();
    expect((await waiting.get(`/gallery/${shoot.id}`)).status).toBe(200);
  });

  it('an expiry moved forward opens an expired gallery again for the client', async () => {
    const { shoot, token } = await makeShoot(studio.studioId);
    const client = await clientAgent(token);
    await db()('shoots').where({ id: shoot.id }).update({ proof_expires_at: new Date(Date.now() - 3 * 86_400_000) });
    expect((await client.get(`/gallery/${shoot.id}`)).status).toBe(410);
    const page = await (await owner.get(`/desk/shoots/${shoot.id}/details`)).text();
    expect(page).toContain('The proofs closed on');
    const clientTab = await (await owner.get(`/desk/shoots/${shoot.id}/client`)).text();
    expect(clientTab).toMatch(new RegExp(`href="/desk/shoots/${shoot.id}/details"[^>]*>Move the date</a>`));

    expect((await patch(owner, shoot.id, { proofExpiresOn: day(7) })).status).toBe(200);
    expect((await client.get(`/gallery/${shoot.id}`)).status).toBe(200);
    expect((await client.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(200);
  });
});

describe('shoot details: hostile input', () => {
  let studio: TestStudio;
  let owner: Agent;
  beforeAll(async () => {
    studio = await makeStudio('Hostile');
    owner = await memberAgent(studio.owner.email);
  });

  it('keeps a script in the title as text wherever the title is shown', async () => {
    const { shoot } = await makeShoot(studio.studioId);
    const title = '<script>alert("fc")</script><img src=x onerror=alert(1)> & Co';
    expect((await patch(owner, shoot.id, { title })).status).toBe(200);
    expect((await stored(shoot.id)).title).toBe(title);
    for (const path of [`/desk/shoots/${shoot.id}/details`, `/desk/shoots/${shoot.id}`, '/desk']) {
      const html = await (await owner.get(path)).text();
      expect(html, path).not.toContain('<script>alert("fc")');
      expect(html, path).not.toContain('<img src=x onerror');
    }
    expect(await (await owner.get(`/desk/shoots/${shoot.id}/details`)).text()).toContain('&lt;script&gt;alert(');
  });

  const refused: [string, unknown][] = [
    ['a title over 160 characters', { title: 'x'.repeat(161) }],
    ['an empty title', { title: '   ' }],
    ['a title that is a number', { title: 42 }],
    ['a passcode over 64 characters', { passcode: 'p'.repeat(65) }],
    ['a passcode of 3 characters', { passcode: 'abc' }],
    ['a passcode that is not text', { passcode: { set: 'x' } }],
    ['an allowance as text', { allowance: '5' }],
    ['an allowance with a fraction', { allowance: 2.5 }],
    ['a negative allowance', { allowance: -1 }],
    ['an allowance of null', { allowance: null }],
    ['an allowance of true', { allowance: true }],
    ['a price as a decimal string', { extraPriceMinor: '25.50', currency: 'EUR' }],
    ['a price with a fraction of a minor unit', { extraPriceMinor: 25.5 }],
    ['a tax rate over 100%', { taxRateBp: 10_001 }],
    ['an unknown currency', { currency: 'XYZ', extraPriceMinor: 100 }],
    ['an unknown tax mode', { taxMode: 'sometimes' }],
    ['a day that does not exist', { shotOn: '2026-02-31' }],
    ['a date in another format', { proofExpiresOn: '31/12/2030' }],
    ['a field that is not a detail', { stage: 'delivered' }],
    ['a good title with a bad allowance', { title: 'Would be fine', allowance: 'many' }],
    ['a list instead of an object', [{ title: 'x' }]],
    ['a bare string', 'title'],
    ['null', null],
  ];
  for (const [what, body] of refused) {
    it(`refuses ${what} with 422 and changes nothing`, async () => {
      const { shoot } = await makeShoot(studio.studioId, { passcode: 'before-1' });
      const before = await stored(shoot.id);
      const res = await patch(owner, shoot.id, body);
      expect(res.status).toBe(422);
      expect(typeof (await res.json()).error).toBe('string');
      expect(await stored(shoot.id)).toEqual(before);
    });
  }

  it('refuses a body that is not JSON (400) and one over the size limit (413)', async () => {
    const { shoot } = await makeShoot(studio.studioId);
    const before = await stored(shoot.id);
    const bad = await owner.fetch(`/api/shoots/${shoot.id}`, { method: 'PATCH', headers: { 'Content-Type': 'application/json' }, body: '{"title": ' });
    expect(bad.status).toBe(400);
    const huge = await patch(owner, shoot.id, { title: 'x'.repeat(70 * 1024) });
    expect(huge.status).toBe(413);
    expect(await stored(shoot.id)).toEqual(before);
  });
});
