/**
 * The viewing link, the client's picks and submitting them, against the running app and the real
 * database, object store and mail catcher. Access checks follow OWASP WSTG-ATHZ-04 (IDOR: ids of
 * another shoot or studio are tried directly) and ASVS 5.0 8.2.2 / 8.4.1 (object level, cross-tenant).
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { randomUUID, createHash } from 'node:crypto';
import sharp from 'sharp';
import { Agent } from '../support/http';
import { makeStudio, makeShoot, memberAgent, clientAgent, type TestStudio } from '../support/factories';
import { waitForMail, mailsTo, rawMail } from '../support/mail';
import { db } from '../../src/lib/server/db';
import { keys, putObject } from '../../src/lib/server/storage';
import { escapeHtml } from '../../src/lib/escape';

interface ShootRef { id: string; studio_id: string }

/**
 * Frames ready for the gallery without running the image pipeline: the thumbnail and proof are
 * small real JPEGs in the object store, one colour per frame so their content hashes differ.
 */
async function readyFrames(shoot: ShootRef, count: number, opts: { state?: string; hidden?: boolean; prefix?: string } = {}) {
  const ids: string[] = [];
  for (let i = 0; i < count; i++) {
    const [frame] = await db()('frames').insert({
      studio_id: shoot.studio_id, shoot_id: shoot.id, object_key: keys.original(shoot.studio_id, shoot.id, 'jpg'),
      original_name: `${opts.prefix ?? 'NL'}_${String(i + 1).padStart(4, '0')}.jpg`, bytes: 250_000, width: 1500, height: 1000,
      state: opts.state ?? 'ready', hidden: opts.hidden ?? false, taken_at: new Date(Date.UTC(2026, 10, 2, 10, 0, i)),
    }).returning('id');
    for (const [kind, width, height] of [['thumb', 480, 320], ['proof', 900, 600]] as const) {
      const body = await sharp({ create: { width, height, channels: 3, background: { r: (i * 37) % 256, g: 120, b: (i * 91) % 256 } } }).jpeg({ quality: 60 }).toBuffer();
      const key = keys.variant(shoot.studio_id, shoot.id, createHash('sha256').update(body).update(frame.id).digest('hex'), 'jpg');
      await putObject(key, body, 'image/jpeg');
      await db()('frame_variants').insert({ studio_id: shoot.studio_id, frame_id: frame.id, kind, object_key: key, width, height, bytes: body.length });
    }
    ids.push(frame.id);
  }
  return ids;
}

const put = (a: Agent, shootId: string, frameId: string, body: unknown = {}) => a.postJson(`/api/gallery/${shootId}/picks/${frameId}`, body, 'PUT');
const del = (a: Agent, shootId: string, frameId: string) => a.fetch(`/api/gallery/${shootId}/picks/${frameId}`, { method: 'DELETE' });
const gallery = async (a: Agent, shootId: string) => {
  const res = await a.get(`/api/gallery/${shootId}/frames`);
  expect(res.status).toBe(200);
  return res.json() as Promise<{ frames: { id: string; name: string; thumb: { url: string }; proof: { url: string } }[]; picks: { frameId: string; note: string }[]; submittedAt: string | null; canPick: boolean; terms: Record<string, unknown> }>;
};
const picksInDb = async (shootId: string) =>
  (await db()('picks').where({ shoot_id: shootId }).orderBy('frame_id').select('frame_id', 'note')).map((r) => ({ frameId: r.frame_id, note: r.note }));

describe('sending the viewing link', () => {
  let studio: TestStudio;
  let owner: Agent;
  beforeAll(async () => {
    studio = await makeStudio('Linkside');
    owner = await memberAgent(studio.owner.email);
  });

  it('is refused while the shoot has no ready frames, with a clear 409', async () => {
    const { shoot } = await makeShoot(studio.studioId, { stage: 'draft' });
    await readyFrames(shoot, 2, { state: 'processing' });
    const res = await owner.postJson(`/api/shoots/${shoot.id}/link`, { message: 'Hi' });
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/no ready frames/);
    const after = await db()('shoots').where({ id: shoot.id }).first('stage', 'link_sent_at');
    expect(after).toEqual({ stage: 'draft', link_sent_at: null });
  });

  it('e-mails a fresh link with the message, studio name and colour, and the proof expiry; the old link stops working', async () => {
    const clientEmail = `linkee-${randomUUID().slice(0, 8)}@example.test`;
    const { shoot, token: oldToken } = await makeShoot(studio.studioId, { passcode: 'fern-42', clientEmail });
    await db()('studios').where({ id: studio.studioId }).update({ brand_colour: '#2f5d62' });
    await readyFrames(shoot, 3);
    const oldSession = await clientAgent(oldToken, 'fern-42');

    const res = await owner.postJson(`/api/shoots/${shoot.id}/link`, { message: 'Thank you for coming in!\n<b>See you</b>' });
    expect(res.status).toBe(201);
    const sent = await res.json();
    expect(sent.to).toBe(clientEmail);
    expect(sent.url).toMatch(/\/g\/[A-Za-z0-9_-]{20,}$/);

    const mail = await waitForMail(clientEmail, /^Your proofs from Linkside Studio/);
    expect(mail.html).toContain(escapeHtml(sent.url));
    expect(mail.html).toContain('#2f5d62');
    expect(mail.text).toContain('Thank you for coming in!');
    // The message is plain text: its markup arrives escaped, never as markup.
    expect(mail.html).toContain('&lt;b&gt;See you&lt;/b&gt;');
    expect(mail.html).not.toContain('<b>See you</b>');
    const expiry = new Date(shoot.proof_expires_at).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
    expect(mail.text).toContain(`open until ${expiry}`);
    expect(mail.text).toContain('the passcode I gave you');
    expect(mail.text).not.toContain('fern-42');
    // Replies reach the studio's contact address, not Fillcard's sender.
    const replyTo = await db()('studios').where({ id: studio.studioId }).first('name', 'contact_email');
    expect(replyTo.contact_email).toBeTruthy();
    expect((await rawMail(mail)).split(/\r?\n/)).toContain(`Reply-To: ${replyTo.name} <${replyTo.contact_email}>`);

    expect((await db()('shoots').where({ id: shoot.id }).first('link_sent_at')).link_sent_at).not.toBeNull();
    const logged = await db()('audit_log').where({ subject_id: shoot.id, action: 'link.sent' }).first('details');
    expect(logged.details.to).toBe(clientEmail);

    // The old link and the session it opened no longer reach anything.
    expect((await new Agent().get(`/g/${oldToken}`)).status).toBe(404);
    expect((await oldSession.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(401);
    // The new one opens the gallery (passcode first).
    const fresh = await clientAgent(sent.url.split('/g/')[1], 'fern-42');
    expect((await fresh.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(200);

    // Sending again works the same and replaces this link too.
    const again = await owner.postJson(`/api/shoots/${shoot.id}/link`, {});
    expect(again.status).toBe(201);
    expect((await fresh.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(401);
  });

  it('moves a draft shoot to proofing, and does not mention a passcode when the shoot has none', async () => {
    const clientEmail = `nopass-${randomUUID().slice(0, 8)}@example.test`;
    const { shoot } = await makeShoot(studio.studioId, { clientEmail, stage: 'draft' });
    await readyFrames(shoot, 1);
    expect((await owner.postJson(`/api/shoots/${shoot.id}/link`, {})).status).toBe(201);
    expect((await db()('shoots').where({ id: shoot.id }).first('stage')).stage).toBe('proofing');
    const mail = await waitForMail(clientEmail, /^Your proofs from/);
    expect(mail.text).not.toMatch(/passcode/i);
  });

  it('refuses a message over 1000 characters (422) and an unknown shoot (404)', async () => {
    const { shoot } = await makeShoot(studio.studioId);
    await readyFrames(shoot, 1);
    expect((await owner.postJson(`/api/shoots/${shoot.id}/link`, { message: 'x'.repeat(1001) })).status).toBe(422);
    expect((await owner.postJson(`/api/shoots/${randomUUID()}/link`, {})).status).toBe(404);
  });

  it('is limited per studio: past the hourly allowance it answers 429 with Retry-After', async () => {
    const busy = await makeStudio('Busy');
    const busyOwner = await memberAgent(busy.owner.email);
    const { shoot } = await makeShoot(busy.studioId);
    await readyFrames(shoot, 1);
    // The studio has already sent its 30 links this hour.
    await db()('rate_limits').insert({ key: `link:studio:${busy.studioId}`, hits: 30, window_started_at: new Date() });
    const res = await busyOwner.postJson(`/api/shoots/${shoot.id}/link`, {});
    expect(res.status).toBe(429);
    expect(Number(res.headers.get('retry-after'))).toBeGreaterThan(0);
    expect((await res.json()).error).toMatch(/30 viewing links in the last hour/);
    expect((await db()('shoots').where({ id: shoot.id }).first('link_sent_at')).link_sent_at).toBeNull();
  });

  it('is for owners only; another studio gets 404; a client and a stranger get 401', async () => {
    const { shoot, token } = await makeShoot(studio.studioId);
    await readyFrames(shoot, 1);
    const other = await makeStudio('Elsewhere');
    const cases: [Agent, number][] = [
      [await memberAgent(studio.retoucher.email), 403],
      [await memberAgent(other.owner.email), 404],
      [await clientAgent(token), 401],
      [new Agent(), 401],
    ];
    for (const [agent, status] of cases) {
      expect((await agent.postJson(`/api/shoots/${shoot.id}/link`, {})).status).toBe(status);
      expect((await agent.fetch(`/api/shoots/${shoot.id}/link`, { method: 'DELETE' })).status).toBe(status);
    }
  });

  it('is sent from the Client & picks tab, which shows the new link once', async () => {
    const clientEmail = `tab-${randomUUID().slice(0, 8)}@example.test`;
    const { shoot } = await makeShoot(studio.studioId, { clientEmail });
    await readyFrames(shoot, 2);
    const res = await owner.postForm(`/desk/shoots/${shoot.id}/client`, { intent: 'send', message: 'See you soon' });
    // Post, then redirect: reloading the page afterwards never sends a second link.
    expect(res.status).toBe(303);
    const html = await (await owner.get(res.headers.get('location')!)).text();
    const url = html.match(/value="(http[^"]+\/g\/[A-Za-z0-9_-]+)"/)?.[1];
    expect(url).toBeTruthy();
    // The address may break before its '@' (a <wbr> in the markup), never inside a word.
    expect(html.replace(/<wbr\s*\/?>/g, '')).toContain(`Viewing link sent to ${clientEmail}`);
    // Shown once: the page read again has no link in it.
    const later = await (await owner.get(res.headers.get('location')!)).text();
    expect(later).not.toContain(url!);
    expect(later).toContain('shown only once');
    expect(later).toMatch(/Sent .* to/);
    expect((await new Agent().get(`/g/${url!.split('/g/')[1]}`)).status).toBe(303);
  });

  it('withdrawing the link ends the client sessions at once', async () => {
    const { shoot, token } = await makeShoot(studio.studioId);
    await readyFrames(shoot, 1);
    const client = await clientAgent(token);
    expect((await client.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(200);
    expect((await owner.fetch(`/api/shoots/${shoot.id}/link`, { method: 'DELETE' })).status).toBe(200);
    expect((await client.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(401);
    // The withdrawn link still says whose it was, so the client knows whom to ask.
    const old = await new Agent().get(`/g/${token}`);
    expect(old.status).toBe(410);
    const page = await old.text();
    expect(page).toContain('This link no longer works');
    expect(page).toContain((await db()('studios').where({ id: studio.studioId }).first('name')).name);
    expect(await db()('audit_log').where({ subject_id: shoot.id, action: 'link.revoked' }).first('id')).toBeTruthy();
  });
});

describe('the client gallery and picks', () => {
  let studio: TestStudio;
  let shoot: ShootRef & Record<string, any>;
  let frames: string[];
  let hidden: string[];
  let processing: string[];
  let client: Agent;
  let token: string;

  beforeAll(async () => {
    studio = await makeStudio('Picks');
    const made = await makeShoot(studio.studioId, { allowance: 2, extraPriceMinor: 2500, currency: 'EUR' });
    shoot = made.shoot;
    token = made.token;
    frames = await readyFrames(shoot, 5);
    hidden = await readyFrames(shoot, 1, { hidden: true, prefix: 'HID' });
    processing = await readyFrames(shoot, 1, { state: 'processing', prefix: 'PRC' });
    client = await clientAgent(token);
  });

  it('lists only ready, visible frames, with thumbnail and watermarked proof URLs only', async () => {
    const g = await gallery(client, shoot.id);
    expect(g.frames.map((f) => f.id)).toEqual(frames);
    expect(g.terms).toEqual({ allowance: 2, extraPriceMinor: 2500, currency: 'EUR', taxRateBp: 0, taxMode: 'exclusive' });
    const body = JSON.stringify(g);
    const originals = await db()('frames').where({ shoot_id: shoot.id }).pluck('object_key');
    for (const key of originals) expect(body).not.toContain(key);
    expect(body).not.toContain('/originals/');
    expect(body).not.toContain('/finals/');
    const allowed = new Set(await db()('frame_variants').whereIn('frame_id', frames).whereIn('kind', ['thumb', 'proof']).pluck('object_key'));
    for (const f of g.frames) {
      for (const url of [f.thumb.url, f.proof.url]) {
        // The app's media route checks the client, then redirects to a short-lived presigned URL.
        expect(url).toMatch(/^\/media\/[0-9a-f-]{36}\?v=[0-9a-f]{12}$/);
        const hop = await client.get(url);
        expect(hop.status).toBe(302);
        const target = hop.headers.get('location')!;
        const key = decodeURIComponent(new URL(target).pathname.split('/').slice(2).join('/'));
        expect(allowed.has(key)).toBe(true);
        const img = await fetch(target);
        expect(img.status).toBe(200);
        expect(img.headers.get('content-type')).toBe('image/jpeg');
        // Nobody else follows the same address to the image.
        expect((await new Agent().get(url)).status).toBe(404);
      }
    }
  });

  it('a pick is idempotent: the same PUT twice leaves one row; a PUT without a note keeps the note', async () => {
    const f = frames[0];
    const a = await put(client, shoot.id, f, { note: 'Brighten the eyes' });
    expect(a.status).toBe(200);
    expect((await put(client, shoot.id, f, { note: 'Brighten the eyes' })).status).toBe(200);
    const kept = await put(client, shoot.id, f);
    expect((await kept.json()).note).toBe('Brighten the eyes');
    expect(await db()('picks').where({ frame_id: f }).count<{ count: number }[]>('* as count')).toEqual([{ count: 1 }]);
    expect((await del(client, shoot.id, f)).status).toBe(200);
    expect((await del(client, shoot.id, f)).status).toBe(200);
    expect(await picksInDb(shoot.id)).toEqual([]);
  });

  it('keeps notes as plain text up to 1000 characters', async () => {
    const f = frames[1];
    const html = '<img src=x onerror="alert(1)"> & <b>bold</b>';
    expect((await put(client, shoot.id, f, { note: html })).status).toBe(200);
    expect((await db()('picks').where({ frame_id: f }).first('note')).note).toBe(html);
    expect((await put(client, shoot.id, f, { note: 'y'.repeat(1001) })).status).toBe(422);
    expect((await put(client, shoot.id, f, { note: 'a\u0000b\r\nc' })).status).toBe(200);
    expect((await db()('picks').where({ frame_id: f }).first('note')).note).toBe('ab\nc');
    expect((await put(client, shoot.id, f, { note: 'z'.repeat(1000) })).status).toBe(200);
    expect((await put(client, shoot.id, f, { note: 42 })).status).toBe(422);
    expect((await put(client, shoot.id, f, { note: '', frameId: 'x' })).status).toBe(422);
    await del(client, shoot.id, f);
  });

  it('refuses hidden, unprocessed, unknown and foreign frames with 404', async () => {
    const otherShoot = await makeShoot(studio.studioId);
    const [foreign] = await readyFrames(otherShoot.shoot, 1);
    const otherStudio = await makeStudio('Foreign');
    const farShoot = await makeShoot(otherStudio.studioId);
    const [far] = await readyFrames(farShoot.shoot, 1);
    for (const id of [hidden[0], processing[0], randomUUID(), foreign, far, 'not-a-uuid']) {
      expect((await put(client, shoot.id, id, { note: 'mine?' })).status).toBe(404);
      expect((await del(client, shoot.id, id)).status).toBe(404);
    }
    expect(await db()('picks').whereIn('frame_id', [hidden[0], processing[0], foreign, far]).first('id')).toBeUndefined();
  });

  it('a client of another shoot guessing this shoot’s ids reaches nothing (401), nor does a studio member', async () => {
    const second = await makeShoot(studio.studioId);
    await readyFrames(second.shoot, 1);
    const intruder = await clientAgent(second.token);
    const owner = await memberAgent(studio.owner.email);
    for (const agent of [intruder, owner, new Agent()]) {
      expect((await agent.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(401);
      expect((await put(agent, shoot.id, frames[2])).status).toBe(401);
      expect((await del(agent, shoot.id, frames[2])).status).toBe(401);
      expect((await agent.postJson(`/api/gallery/${shoot.id}/submit`, {})).status).toBe(401);
      expect((await agent.get(`/gallery/${shoot.id}/review`)).status).toBe(401);
    }
    // Its own shoot's path with this shoot's frame id: not its frame.
    expect((await put(intruder, second.shoot.id, frames[2])).status).toBe(404);
    expect(await db()('picks').where({ frame_id: frames[2] }).first('id')).toBeUndefined();
  });

  it('two devices of the same client toggling at once end in one consistent state, never a doubled pick', async () => {
    const phone = await clientAgent(token);
    const laptop = await clientAgent(token);
    // Both devices fire the same pick at once, many times over.
    const same = await Promise.all(Array.from({ length: 20 }, (_, i) => put(i % 2 ? phone : laptop, shoot.id, frames[3], { note: `from ${i % 2 ? 'phone' : 'laptop'}` })));
    expect(same.map((r) => r.status)).toEqual(Array(20).fill(200));
    expect(await db()('picks').where({ frame_id: frames[3] }).count<{ count: number }[]>('* as count')).toEqual([{ count: 1 }]);

    // Each device runs its own sequence of toggles over the same frames, interleaved with the other's.
    const run = async (agent: Agent, seed: number) => {
      for (let i = 0; i < 30; i++) {
        const f = frames[(seed * 7 + i * 3) % frames.length];
        const res = (seed + i) % 3 === 0 ? await del(agent, shoot.id, f) : await put(agent, shoot.id, f, { note: `n${seed}-${i}` });
        expect(res.status).toBe(200);
      }
    };
    await Promise.all([run(phone, 1), run(laptop, 2)]);
    const fromPhone = await gallery(phone, shoot.id);
    const fromLaptop = await gallery(laptop, shoot.id);
    const db1 = await picksInDb(shoot.id);
    const sorted = (p: { frameId: string; note: string }[]) => [...p].map((x) => ({ frameId: x.frameId, note: x.note })).sort((a, b) => a.frameId.localeCompare(b.frameId));
    expect(sorted(fromPhone.picks)).toEqual(db1);
    expect(sorted(fromLaptop.picks)).toEqual(db1);
    const perFrame = await db()('picks').where({ shoot_id: shoot.id }).groupBy('frame_id').select('frame_id', db().raw('count(*)::int AS n'));
    expect(perFrame.every((r) => r.n === 1)).toBe(true);
    for (const f of frames) await del(client, shoot.id, f);
  });

  it('the gallery page and review page render for the client; notes are escaped on the review page', async () => {
    await put(client, shoot.id, frames[0], { note: '<script>alert("x")</script>' });
    const page = await client.get(`/gallery/${shoot.id}`);
    expect(page.status).toBe(200);
    const review = await client.get(`/gallery/${shoot.id}/review`);
    expect(review.status).toBe(200);
    const html = await review.text();
    expect(html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;');
    expect(html).not.toContain('<script>alert("x")</script>');
    await del(client, shoot.id, frames[0]);
  });
});

describe('submitting picks', () => {
  let studio: TestStudio;
  beforeAll(async () => {
    studio = await makeStudio('Submit');
    // A second owner: the studio e-mail goes to every owner.
    const [second] = await db()('users').insert({ email: `second-owner-${randomUUID().slice(0, 8)}@example.test`, name: 'Second Owner' }).returning(['id', 'email']);
    await db()('memberships').insert({ studio_id: studio.studioId, user_id: second.id, role: 'owner' });
  });

  it('refuses to send no picks (409)', async () => {
    const { shoot, token } = await makeShoot(studio.studioId);
    await readyFrames(shoot, 2);
    const client = await clientAgent(token);
    const res = await client.postJson(`/api/gallery/${shoot.id}/submit`, {});
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/at least one frame/);
  });

  it('within the allowance: locks the picks, moves to picks_in and e-mails every owner the list with escaped notes', async () => {
    const { shoot, token, client: person } = await makeShoot(studio.studioId, { allowance: 3 });
    const frames = await readyFrames(shoot, 4);
    const client = await clientAgent(token);
    const evil = '<a href="http://evil.test">click</a> & more';
    expect((await put(client, shoot.id, frames[0], { note: evil })).status).toBe(200);
    expect((await put(client, shoot.id, frames[2])).status).toBe(200);
    const res = await client.postJson(`/api/gallery/${shoot.id}/submit`, {});
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ needsPayment: false, extras: 0, totalMinor: 0 });
    const after = await db()('shoots').where({ id: shoot.id }).first('stage', 'picks_submitted_at');
    expect(after.stage).toBe('picks_in');
    expect(after.picks_submitted_at).not.toBeNull();

    const owners: string[] = await db()('memberships as m').join('users as u', 'u.id', 'm.user_id').where({ 'm.studio_id': studio.studioId, 'm.role': 'owner' }).pluck('u.email');
    expect(owners).toHaveLength(2);
    for (const to of owners) {
      const mail = await waitForMail(to, new RegExp(`^Picks in: “${shoot.title}” \\(2\\)`));
      expect(mail.text).toContain(`${person.name} has chosen 2 frames`);
      expect(mail.text).toContain('NL_0001.jpg');
      expect(mail.text).toContain('NL_0003.jpg');
      expect(mail.text).toContain(`Note: ${evil}`);
      expect(mail.html).toContain(escapeHtml(evil));
      expect(mail.html).not.toContain('<a href="http://evil.test">');
    }
    // The retoucher is not an owner and gets nothing.
    expect((await mailsTo(studio.retoucher.email)).filter((m) => m.subject.startsWith('Picks in'))).toEqual([]);

    // Locked: every pick API answers 409 with the reason.
    for (const res2 of [
      await put(client, shoot.id, frames[1]),
      await put(client, shoot.id, frames[0], { note: 'changed my mind' }),
      await del(client, shoot.id, frames[0]),
      await client.postJson(`/api/gallery/${shoot.id}/submit`, {}),
    ]) {
      expect(res2.status).toBe(409);
      expect((await res2.json()).error).toMatch(/Your picks were sent to the studio/);
    }
    expect((await db()('picks').where({ frame_id: frames[0] }).first('note')).note).toBe(evil);
    const g = await gallery(client, shoot.id);
    expect(g.canPick).toBe(false);
    expect(g.submittedAt).not.toBeNull();

    // The studio's tab shows the note escaped.
    const owner = await memberAgent(studio.owner.email);
    const tab = await (await owner.get(`/desk/shoots/${shoot.id}/client`)).text();
    expect(tab).toContain(escapeHtml(evil));
    expect(tab).not.toContain('<a href="http://evil.test">');
  });

  it('with extras: answers needsPayment with the price, keeps proofing and locks the picks', async () => {
    const { shoot, token } = await makeShoot(studio.studioId, { allowance: 2, extraPriceMinor: 2500, currency: 'EUR' });
    await db()('shoots').where({ id: shoot.id }).update({ tax_rate_bp: 2000, tax_mode: 'exclusive' });
    const frames = await readyFrames(shoot, 6);
    const client = await clientAgent(token);
    for (const f of frames.slice(0, 5)) expect((await put(client, shoot.id, f)).status).toBe(200);
    const res = await client.postJson(`/api/gallery/${shoot.id}/submit`, {});
    expect(res.status).toBe(200);
    // Worked by hand: 5 picks − 2 included = 3 extras; 3 × 2500 = 7500 cents net; 20 % tax = 1500; total 9000.
    expect(await res.json()).toEqual({ needsPayment: true, extras: 3, totalMinor: 9000 });
    const after = await db()('shoots').where({ id: shoot.id }).first('stage', 'picks_submitted_at');
    expect(after.stage).toBe('proofing');
    expect(after.picks_submitted_at).not.toBeNull();
    expect((await put(client, shoot.id, frames[5])).status).toBe(409);
    const g = await gallery(client, shoot.id);
    expect(g).toMatchObject({ canPick: false, awaitingPayment: true });
  });

  it('a pick of a frame the studio hid later is dropped when the picks are sent, and not charged', async () => {
    const { shoot, token } = await makeShoot(studio.studioId, { allowance: 1, extraPriceMinor: 1000 });
    const frames = await readyFrames(shoot, 2);
    const client = await clientAgent(token);
    await put(client, shoot.id, frames[0]);
    await put(client, shoot.id, frames[1]);
    await db()('frames').where({ id: frames[1] }).update({ hidden: true });
    expect(await (await client.postJson(`/api/gallery/${shoot.id}/submit`, {})).json()).toEqual({ needsPayment: false, extras: 0, totalMinor: 0 });
    expect((await picksInDb(shoot.id)).map((p) => p.frameId)).toEqual([frames[0]]);
  });

  it('a submit racing pick changes: every pick is either counted or refused, never lost after a 200', async () => {
    const { shoot, token } = await makeShoot(studio.studioId, { allowance: 100 });
    const frames = await readyFrames(shoot, 12);
    const client = await clientAgent(token);
    await put(client, shoot.id, frames[0]);
    const results = await Promise.all([
      ...frames.slice(1).map((f) => put(client, shoot.id, f).then((r) => ({ f, status: r.status }))),
      client.postJson(`/api/gallery/${shoot.id}/submit`, {}).then((r) => ({ f: 'submit', status: r.status })),
    ]);
    expect(results.find((r) => r.f === 'submit')!.status).toBe(200);
    const stored = new Set((await picksInDb(shoot.id)).map((p) => p.frameId));
    for (const r of results.filter((x) => x.f !== 'submit')) {
      expect([200, 409]).toContain(r.status);
      expect(stored.has(r.f)).toBe(r.status === 200);
    }
    const logged = await db()('audit_log').where({ subject_id: shoot.id, action: 'picks.submitted' }).first('details');
    expect(logged.details.picks).toBe(stored.size);
  });
});

describe('reopening picks', () => {
  let studio: TestStudio;
  let owner: Agent;
  beforeAll(async () => {
    studio = await makeStudio('Reopen');
    owner = await memberAgent(studio.owner.email);
  });

  async function submitted(opts: { allowance?: number } = {}) {
    const made = await makeShoot(studio.studioId, { allowance: opts.allowance ?? 5 });
    const frames = await readyFrames(made.shoot, 3);
    const client = await clientAgent(made.token);
    await put(client, made.shoot.id, frames[0], { note: 'keep' });
    expect((await client.postJson(`/api/gallery/${made.shoot.id}/submit`, {})).status).toBe(200);
    return { ...made, frames, client };
  }

  it('the owner reopens: picks unlock, stage back to proofing, the client can change them again', async () => {
    const { shoot, frames, client } = await submitted();
    expect((await db()('shoots').where({ id: shoot.id }).first('stage')).stage).toBe('picks_in');
    const res = await owner.postJson(`/api/shoots/${shoot.id}/picks/reopen`, {});
    expect(res.status).toBe(200);
    const after = await db()('shoots').where({ id: shoot.id }).first('stage', 'picks_submitted_at');
    expect(after).toEqual({ stage: 'proofing', picks_submitted_at: null });
    expect((await put(client, shoot.id, frames[1])).status).toBe(200);
    expect((await picksInDb(shoot.id)).length).toBe(2);
    expect(await db()('audit_log').where({ subject_id: shoot.id, action: 'picks.reopened' }).first('id')).toBeTruthy();
    // Nothing to reopen now.
    expect((await owner.postJson(`/api/shoots/${shoot.id}/picks/reopen`, {})).status).toBe(409);
  });

  it('is refused for a retoucher (403), another studio (404), a client (401)', async () => {
    const { shoot } = await submitted();
    const other = await makeStudio('Other');
    expect((await (await memberAgent(studio.retoucher.email)).postJson(`/api/shoots/${shoot.id}/picks/reopen`, {})).status).toBe(403);
    expect((await (await memberAgent(other.owner.email)).postJson(`/api/shoots/${shoot.id}/picks/reopen`, {})).status).toBe(404);
    expect((await new Agent().postJson(`/api/shoots/${shoot.id}/picks/reopen`, {})).status).toBe(401);
    expect((await db()('shoots').where({ id: shoot.id }).first('picks_submitted_at')).picks_submitted_at).not.toBeNull();
  });

  it('is refused once an order for extras is paid', async () => {
    const { shoot } = await submitted({ allowance: 0 });
    await db()('orders').insert({
      studio_id: studio.studioId, shoot_id: shoot.id, extras: 1, unit_price_minor: 2500, net_minor: 2500, tax_minor: 0, total_minor: 2500,
      currency: 'EUR', tax_rate_bp: 0, tax_mode: 'exclusive', state: 'paid', paid_at: new Date(),
    });
    const res = await owner.postJson(`/api/shoots/${shoot.id}/picks/reopen`, {});
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/paid/);
    expect((await db()('shoots').where({ id: shoot.id }).first('picks_submitted_at')).picks_submitted_at).not.toBeNull();
  });

  it('works from the Client & picks tab', async () => {
    const { shoot } = await submitted();
    const page = await (await owner.get(`/desk/shoots/${shoot.id}/client`)).text();
    expect(page).toContain('Reopen picks');
    expect(page).toContain('keep');
    const res = await owner.postForm(`/desk/shoots/${shoot.id}/client`, { intent: 'reopen' });
    expect(res.status).toBe(303);
    expect(await (await owner.get(res.headers.get('location')!)).text()).toContain('Picks are open again');
    expect((await db()('shoots').where({ id: shoot.id }).first('stage')).stage).toBe('proofing');
  });
});

describe('closed galleries', () => {
  it('an expired gallery answers 410 to its client on every pick API; a wrong passcode reaches nothing', async () => {
    const studio = await makeStudio('Closing');
    const { shoot, token } = await makeShoot(studio.studioId);
    const frames = await readyFrames(shoot, 1);
    const client = await clientAgent(token);
    await db()('shoots').where({ id: shoot.id }).update({ proof_expires_at: new Date(Date.now() - 1000) });
    expect((await client.get(`/api/gallery/${shoot.id}/frames`)).status).toBe(410);
    expect((await put(client, shoot.id, frames[0])).status).toBe(410);
    expect((await client.postJson(`/api/gallery/${shoot.id}/submit`, {})).status).toBe(410);
    expect((await new Agent().get(`/g/${token}`)).status).toBe(410);

    const guarded = await makeShoot(studio.studioId, { passcode: 'heron-9' });
    const [gf] = await readyFrames(guarded.shoot, 1);
    const visitor = new Agent();
    await visitor.get(`/g/${guarded.token}`);
    const wrong = await visitor.postForm(`/gallery/${guarded.shoot.id}/passcode`, { passcode: 'heron-8' });
    expect(wrong.status).toBe(400);
    expect((await visitor.get(`/api/gallery/${guarded.shoot.id}/frames`)).status).toBe(403);
    expect((await put(visitor, guarded.shoot.id, gf)).status).toBe(403);
    expect(await db()('picks').where({ frame_id: gf }).first('id')).toBeUndefined();
  });
});
