/**
 * Bad uploads through the real path: the sign API, presigned PUTs straight to the object store,
 * registration, and the real worker. Each bad file gets a clear message (from the API or on its
 * frame), the rest of the shoot stays as it was, and no object is left in storage that no frame
 * needs (OWASP File Upload Cheat Sheet: validate type by content, limit size, keep names out of
 * keys; OWASP ASVS 5.0 V5.2 file checks, V8.2.2/V8.4.1 object and tenant access).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import sharp from 'sharp';
import { syntheticPortrait } from '../../scripts/lib/synthetic-portrait';
import { makeStudio, makeShoot, memberAgent, type TestStudio } from '../support/factories';
import type { Agent } from '../support/http';
import { db } from '../../src/lib/server/db';
import { keys, listKeys } from '../../src/lib/server/storage';
import { UPLOAD_LIMITS } from '../../src/lib/server/uploads';
import { pngDeclaring } from '../fixtures/image-tools';

interface Signed {
  url: string;
  key: string;
  headers?: Record<string, string>;
}

async function sign(agent: Agent, shootId: string, body: Record<string, unknown>) {
  const res = await agent.postJson(`/api/shoots/${shootId}/uploads/sign`, { method: 'PUT', key: '', ...body });
  return { status: res.status, body: (await res.json()) as Signed & { error?: string } };
}

/** A presigned PUT, as the browser's uploader sends it. */
async function put(signed: Signed, bytes: Buffer) {
  const res = await fetch(signed.url, { method: 'PUT', headers: signed.headers, body: new Uint8Array(bytes) });
  await res.arrayBuffer();
  expect(res.status, 'the object store took the file').toBe(200);
}

async function register(agent: Agent, shootId: string, body: { key: string; name: string; size: number }) {
  const res = await agent.postJson(`/api/shoots/${shootId}/frames`, body);
  return { status: res.status, body: (await res.json()) as { id: string; created: boolean; error?: string } };
}

/** Sign, send and register one file; returns the frame id the API gave. */
async function upload(agent: Agent, shootId: string, name: string, bytes: Buffer) {
  const signed = await sign(agent, shootId, { fileName: name, size: bytes.length });
  expect(signed.status, signed.body.error).toBe(200);
  await put(signed.body, bytes);
  const reg = await register(agent, shootId, { key: signed.body.key, name, size: bytes.length });
  expect(reg.status, reg.body.error).toBe(201);
  return { frameId: reg.body.id, key: signed.body.key };
}

async function settled(frameId: string, timeoutMs = 90_000) {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const f = await db()('frames').where({ id: frameId }).first();
    if (f && (f.state === 'ready' || f.state === 'failed')) return f;
    if (Date.now() > until) throw new Error(`frame ${frameId} still ${f?.state} after ${timeoutMs / 1000} s`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

async function objectExists(key: string) {
  return (await listKeys(key)).includes(key);
}

describe('uploading bad files', () => {
  let studio: TestStudio;
  let other: TestStudio;
  let owner: Agent;
  let shootId: string;
  let prefix: string;
  let good: { frameId: string; key: string; bytes: Buffer; row: Record<string, unknown> };

  beforeAll(async () => {
    studio = await makeStudio('Uploads');
    other = await makeStudio('UploadsOther');
    owner = await memberAgent(studio.owner.email);
    shootId = (await makeShoot(studio.studioId, { stage: 'draft' })).shoot.id;
    prefix = keys.shootPrefix(studio.studioId, shootId);
    const bytes = await syntheticPortrait({ width: 900, height: 600, seed: 4242 });
    const up = await upload(owner, shootId, 'keeper.jpg', bytes);
    const row = await settled(up.frameId);
    expect(row.state).toBe('ready');
    good = { ...up, bytes, row };
  });

  afterAll(async () => {
    // The good frame is exactly as it was after all the bad ones, and storage holds only what frames use.
    const row = await db()('frames').where({ id: good.frameId }).first();
    expect(row).toEqual(good.row);
    expect(await db()('frame_variants').where({ frame_id: good.frameId }).count('* as n').first()).toEqual({ n: 5 });
    const needed = new Set([
      ...(await db()('frames').where({ shoot_id: shootId, state: 'ready' }).pluck('object_key')),
      ...(await db()('frame_variants as v').join('frames as f', 'f.id', 'v.frame_id').where('f.shoot_id', shootId).pluck('v.object_key')),
    ]);
    expect(new Set(await listKeys(prefix))).toEqual(needed);
  });

  it('a text file named .jpg fails on its frame, saying what it is, and its object is removed', async () => {
    const { frameId, key } = await upload(owner, shootId, 'notes.jpg', Buffer.from('Remember: fill card left of the key light.\n'));
    const f = await settled(frameId);
    expect(f.state).toBe('failed');
    expect(f.error).toBe('“notes.jpg” is a text file, not a photo. Fillcard takes JPEG, PNG, TIFF or WebP files.');
    expect(await objectExists(key)).toBe(false);
  });

  it('a truncated JPEG fails as damaged, and its object is removed', async () => {
    const whole = await syntheticPortrait({ width: 800, height: 600, seed: 77 });
    const { frameId, key } = await upload(owner, shootId, 'cut-off.jpg', whole.subarray(0, Math.floor(whole.length * 0.6)));
    const f = await settled(frameId);
    expect(f.state).toBe('failed');
    expect(f.error).toMatch(/^“cut-off\.jpg” looks damaged or incomplete; the upload may have been cut off\./);
    expect(await objectExists(key)).toBe(false);
  });

  it('an empty file is refused when signing, and an empty object is refused and removed at registration', async () => {
    const refused = await sign(owner, shootId, { fileName: 'blank.jpg', size: 0 });
    expect(refused.status).toBe(422);
    expect(refused.body.error).toBe('“blank.jpg” is empty (0 bytes). Please export it again.');

    // A browser that declared one size and sent nothing: the empty object is caught at registration.
    const signed = await sign(owner, shootId, { fileName: 'blank.jpg', size: 10 });
    await put(signed.body, Buffer.alloc(0));
    const reg = await register(owner, shootId, { key: signed.body.key, name: 'blank.jpg', size: 0 });
    expect(reg.status).toBe(422);
    expect(reg.body.error).toBe('“blank.jpg” is empty (0 bytes). Please export it again.');
    expect(await objectExists(signed.body.key)).toBe(false);
    expect(await db()('frames').where({ object_key: signed.body.key }).first()).toBeUndefined();
  });

  it('a PNG declaring 20000 × 20000 pixels is refused before decoding, and its object is removed', async () => {
    const bomb = pngDeclaring(20_000, 20_000);
    expect(await sharp(bomb, { limitInputPixels: false }).metadata()).toMatchObject({ width: 20_000, height: 20_000 });
    const { frameId, key } = await upload(owner, shootId, 'huge.png', bomb);
    const f = await settled(frameId);
    expect(f.state).toBe('failed');
    expect(f.error).toBe('“huge.png” is 20000 × 20000 pixels (400 megapixels); Fillcard takes up to 150 megapixels per frame. Please export it smaller.');
    expect(await objectExists(key)).toBe(false);
  });

  it('a file over the size limit is refused when signing, by its declared size', async () => {
    const res = await sign(owner, shootId, { fileName: 'enormous.tif', size: UPLOAD_LIMITS.maxBytes + 1 });
    expect(res.status).toBe(413);
    expect(res.body.error).toBe('“enormous.tif” is 200 MB; Fillcard takes files up to 200 MB. Please export it as a high-quality JPEG.');
    expect(res.body.url).toBeUndefined();
  });

  it('an object bigger than the size it was registered with is refused and removed', async () => {
    const bytes = await syntheticPortrait({ width: 640, height: 480, seed: 5 });
    const signed = await sign(owner, shootId, { fileName: 'grew.jpg', size: 1000 });
    await put(signed.body, bytes);
    const reg = await register(owner, shootId, { key: signed.body.key, name: 'grew.jpg', size: 1000 });
    expect(reg.status).toBe(422);
    expect(reg.body.error).toBe(`“grew.jpg” arrived with ${bytes.length} bytes instead of 1000. Please upload it again.`);
    expect(await objectExists(signed.body.key)).toBe(false);
    expect(await db()('frames').where({ object_key: signed.body.key }).first()).toBeUndefined();
  });

  it('a second copy of a frame already in the shoot fails as a duplicate, and only its own object goes', async () => {
    const { frameId, key } = await upload(owner, shootId, 'keeper-copy.jpg', good.bytes);
    const f = await settled(frameId);
    expect(f.state).toBe('failed');
    expect(f.error).toBe('This is the same file as keeper.jpg, already in the shoot.');
    expect(createHash('sha256').update(good.bytes).digest('hex')).toBe(good.row.sha256);
    expect(await objectExists(key)).toBe(false);
    expect(await objectExists(good.key)).toBe(true);
    expect(await db()('frame_variants').where({ frame_id: frameId })).toEqual([]);
  });

  it('markup in EXIF text is stored as text and rendered escaped', async () => {
    const markup = '<script>alert("lens")</script>';
    const bytes = await syntheticPortrait({ width: 700, height: 500, seed: 31, exif: { LensModel: markup, Make: 'Northlight Optics' } });
    const { frameId } = await upload(owner, shootId, 'markup.jpg', bytes);
    const f = await settled(frameId);
    expect(f.state).toBe('ready');
    expect(f.lens).toBe(markup);
    const api = await (await owner.get(`/api/shoots/${shootId}/frames`)).json();
    expect(api.frames.find((x: { id: string }) => x.id === frameId).lens).toBe(markup);
    const html = await (await owner.get(`/desk/shoots/${shootId}`)).text();
    expect(html).not.toContain(markup);
    expect(html).toContain('&lt;script&gt;alert(\\&quot;lens\\&quot;)&lt;/script&gt;');
  });

  it('a PNG named .jpg fails on its frame, saying what it holds', async () => {
    const png = await sharp(await syntheticPortrait({ width: 400, height: 300, seed: 8 })).png().toBuffer();
    const { frameId, key } = await upload(owner, shootId, 'renamed.jpg', png);
    const f = await settled(frameId);
    expect(f.state).toBe('failed');
    expect(f.error).toBe('“renamed.jpg” is named as a JPEG file but holds a PNG image. Please export it again, or rename it to match its contents.');
    expect(await objectExists(key)).toBe(false);
  });

  it('a file type Fillcard does not take is refused when signing', async () => {
    const res = await sign(owner, shootId, { fileName: 'portrait.heic', size: 2_000_000 });
    expect(res.status).toBe(415);
    expect(res.body.error).toBe('“portrait.heic” cannot be uploaded: Fillcard takes JPEG, PNG, TIFF and WebP files. Please export it as JPEG.');
  });

  it('keys of another shoot or another studio are refused by sign and register (403)', async () => {
    const sameStudioShoot = (await makeShoot(studio.studioId, { stage: 'draft' })).shoot.id;
    const otherStudioShoot = (await makeShoot(other.studioId, { stage: 'draft' })).shoot.id;
    const otherOwner = await memberAgent(other.owner.email);
    const theirs = [
      (await sign(owner, sameStudioShoot, { fileName: 'a.jpg', size: 100 })).body.key,
      (await sign(otherOwner, otherStudioShoot, { fileName: 'b.jpg', size: 100 })).body.key,
      `${prefix}originals/../../${sameStudioShoot}/originals/x.jpg`,
    ];
    for (const key of theirs) {
      for (const req of [
        { method: 'PUT', key, uploadId: 'u1', partNumber: 1 },
        { method: 'POST', key, uploadId: 'u1' },
        { method: 'GET', key, uploadId: 'u1' },
        { method: 'DELETE', key },
      ]) {
        const res = await owner.postJson(`/api/shoots/${shootId}/uploads/sign`, req);
        expect(res.status, `${req.method} ${key}`).toBe(403);
        expect((await res.json()).error).toBe('That upload does not belong to this shoot.');
      }
      const reg = await register(owner, shootId, { key, name: 'theirs.jpg', size: 100 });
      expect(reg.status).toBe(403);
      expect(reg.body.error).toBe('That upload does not belong to this shoot.');
    }
    // Another studio's shoot id looks like a missing one.
    expect((await sign(owner, otherStudioShoot, { fileName: 'c.jpg', size: 100 })).status).toBe(404);
  });

  it('registering the same key twice gives one frame', async () => {
    const bytes = await syntheticPortrait({ width: 600, height: 400, seed: 1234 });
    const signed = await sign(owner, shootId, { fileName: 'twice.jpg', size: bytes.length });
    await put(signed.body, bytes);
    const body = { key: signed.body.key, name: 'twice.jpg', size: bytes.length };
    const [first, second] = [await register(owner, shootId, body), await register(owner, shootId, body)];
    expect(first.status).toBe(201);
    expect(second.status).toBe(200);
    expect(second.body.id).toBe(first.body.id);
    expect(await db()('frames').where({ object_key: signed.body.key }).count('* as n').first()).toEqual({ n: 1 });
    expect((await settled(first.body.id)).state).toBe('ready');
  });
});

describe('storage housekeeping', () => {
  it('deletes uploads nobody registered once they are old enough, and keeps registered ones', async () => {
    const { deleteOrphanUploads } = await import('../../src/lib/server/uploads');
    const { putObject, headObject, keys } = await import('../../src/lib/server/storage');
    const { makeStudio, makeShoot } = await import('../support/factories');
    const { db } = await import('../../src/lib/server/db');
    const studio = await makeStudio('Housekeeping');
    const { shoot } = await makeShoot(studio.studioId);
    const orphan = keys.original(studio.studioId, shoot.id, 'jpg');
    const owned = keys.original(studio.studioId, shoot.id, 'jpg');
    await putObject(orphan, Buffer.from('not registered'), 'image/jpeg');
    await putObject(owned, Buffer.from('registered'), 'image/jpeg');
    await db()('frames').insert({ studio_id: studio.studioId, shoot_id: shoot.id, object_key: owned, original_name: 'kept.jpg', bytes: 10, state: 'failed' });
    // Everything counts as old when the age limit is negative.
    await deleteOrphanUploads(-60_000);
    expect(await headObject(orphan)).toBeNull();
    expect(await headObject(owned)).not.toBeNull();
  });
});

describe('hostile uploads', () => {
  it('an SVG is refused at signing; an SVG renamed .jpg is refused by the worker and removed', async () => {
    const { makeStudio, makeShoot, memberAgent } = await import('../support/factories');
    const studio = await makeStudio('Hostile uploads');
    const { shoot } = await makeShoot(studio.studioId, { stage: 'draft' });
    const owner = await memberAgent(studio.owner.email);
    const svg = Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"><rect width="10" height="10"/></svg>');
    const refused = await sign(owner, shoot.id, { fileName: 'logo.svg', size: svg.length });
    expect(refused.status).toBe(415);
    expect(refused.body.error).toMatch(/JPEG, PNG, TIFF and WebP/);
    const { frameId, key } = await upload(owner, shoot.id, 'logo.jpg', svg);
    const frame = await settled(frameId);
    expect(frame.state).toBe('failed');
    expect(frame.error).toMatch(/SVG|not a photo|not an image/i);
    expect(await objectExists(key)).toBe(false);
  });

  it('a polyglot (a real JPEG that also carries HTML) becomes a frame whose proof holds no trace of the HTML', async () => {
    const { makeStudio, makeShoot, memberAgent } = await import('../support/factories');
    const { getObjectBuffer } = await import('../../src/lib/server/storage');
    const sharp = (await import('sharp')).default;
    const studio = await makeStudio('Hostile uploads');
    const { shoot } = await makeShoot(studio.studioId, { stage: 'draft' });
    const owner = await memberAgent(studio.owner.email);
    const jpeg = await sharp({ create: { width: 900, height: 600, channels: 3, background: '#6b5a4a' } }).jpeg().toBuffer();
    const html = Buffer.from('<html><body><script>alert("polyglot")</script></body></html>');
    // A JPEG comment segment (FFFE) right after the start marker carries the HTML.
    const segment = Buffer.concat([Buffer.from([0xff, 0xfe, (html.length + 2) >> 8, (html.length + 2) & 0xff]), html]);
    const polyglot = Buffer.concat([jpeg.subarray(0, 2), segment, jpeg.subarray(2)]);
    const { frameId } = await upload(owner, shoot.id, 'polyglot.jpg', polyglot);
    const frame = await settled(frameId);
    expect(frame.state).toBe('ready');
    const variants = await db()('frame_variants').where({ frame_id: frameId }).select('kind', 'object_key');
    expect(variants.length).toBe(5);
    for (const v of variants) {
      const bytes = await getObjectBuffer(v.object_key);
      expect(bytes.includes('<script>'), `${v.kind} is re-encoded without the HTML`).toBe(false);
    }
  });
});
