/**
 * Finals from upload to download, through the real API, object store and worker: matching by file
 * name and by hand, replacing a final, hand-off, single downloads and streamed ZIPs, expiry,
 * archive and delete. Outside references: Info-ZIP `unzip -t` / `unzip -Z1` for every archive;
 * ImageMagick `identify` for pixel size, colour space and ICC profile; ExifTool for the tags kept
 * and dropped; RFC 6266 / RFC 5987 for Content-Disposition; OWASP ASVS 5.0 V8.2.2 / V8.4.1 (object
 * and tenant access) and 5.4.1 (download file names).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFile } from 'node:child_process';
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import sharp from 'sharp';
import { syntheticPortrait } from '../../scripts/lib/synthetic-portrait';
import { makeStudio, makeShoot, memberAgent, clientAgent, type TestStudio } from '../support/factories';
import type { Agent } from '../support/http';
import { waitForMail } from '../support/mail';
import { db } from '../../src/lib/server/db';
import { getObjectBuffer, keys, listKeys } from '../../src/lib/server/storage';
import { IDENTIFY, EXIFTOOL, tempFile, removeTempFiles } from '../fixtures/image-tools';

const run = promisify(execFile);
const UNZIP = '/usr/bin/unzip';

interface Signed { url: string; key: string; headers?: Record<string, string> }

async function sendFile(agent: Agent, signPath: string, registerPath: string, name: string, bytes: Buffer) {
  const signRes = await agent.postJson(signPath, { method: 'PUT', key: '', fileName: name, size: bytes.length });
  const signed = (await signRes.json()) as Signed & { error?: string };
  expect(signRes.status, signed.error).toBe(200);
  const put = await fetch(signed.url, { method: 'PUT', headers: signed.headers, body: new Uint8Array(bytes) });
  await put.arrayBuffer();
  expect(put.status).toBe(200);
  const reg = await agent.postJson(registerPath, { key: signed.key, name, size: bytes.length });
  return { status: reg.status, body: (await reg.json()) as Record<string, any>, key: signed.key };
}

async function until<T>(what: string, fn: () => Promise<T | null | undefined | false>, timeoutMs = 90_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await fn();
    if (v) return v;
    if (Date.now() > end) throw new Error(`${what} did not happen within ${timeoutMs / 1000} s`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

const frameReady = (id: string) => until(`frame ${id} processed`, async () => {
  const f = await db()('frames').where({ id }).first();
  return f && (f.state === 'ready' || f.state === 'failed') ? f : null;
});
const finalSettled = (id: string) => until(`final ${id} processed`, async () => {
  const f = await db()('finals').where({ id }).first();
  return f && (f.state === 'ready' || f.state === 'failed') ? f : null;
});

/** identify's reading of a stored object: width, height, colour space and ICC description. */
async function identifyObject(key: string) {
  const file = tempFile(await getObjectBuffer(key));
  const { stdout } = await run(IDENTIFY, ['-format', '%w|%h|%[colorspace]|%[icc:description]', file]);
  const [w, h, space, icc] = stdout.trim().split('|');
  return { width: Number(w), height: Number(h), space, icc };
}

let scratch: string;
/** Streams a response body into a file (never into memory as a whole) and returns its path. */
async function saveBody(res: Response, name: string): Promise<string> {
  const file = path.join(scratch, name);
  const { createWriteStream } = await import('node:fs');
  const { Readable } = await import('node:stream');
  const { pipeline } = await import('node:stream/promises');
  await pipeline(Readable.fromWeb(res.body as never), createWriteStream(file));
  return file;
}

/** Info-ZIP's test of the archive and its list of names. */
async function unzipCheck(file: string) {
  const test = await run(UNZIP, ['-t', file]);
  const list = await run(UNZIP, ['-Z1', file]);
  return { ok: test.stdout.includes('No errors detected'), names: list.stdout.trim().split('\n').filter(Boolean) };
}

/** Checks one Content-Disposition against RFC 6266 / RFC 5987 and returns the UTF-8 file name it carries. */
function parseDisposition(value: string | null) {
  expect(value).toBeTruthy();
  const v = value!;
  // Nothing a header could be split or quoted out on.
  expect(v).not.toMatch(/[\r\n\u0000-\u001f\u007f]/);
  const m = v.match(/^attachment; filename="([^"\\]*)"; filename\*=UTF-8''([A-Za-z0-9!#$&+\-.^_`|~%]+)$/);
  expect(m, v).not.toBeNull();
  const ascii = m![1]!;
  expect(ascii).toMatch(/^[\x20-\x7e]*$/);
  expect(ascii).not.toMatch(/[\\/%;]/);
  const utf8 = decodeURIComponent(m![2]!);
  expect(utf8).not.toMatch(/[\\/\r\n"]/);
  return { ascii, utf8 };
}

describe('finals: upload, match, hand off, download', () => {
  let studio: TestStudio;
  let other: TestStudio;
  let owner: Agent;
  let retoucher: Agent;
  let otherRetoucher: Agent;
  let client: Agent;
  let clientB: Agent;
  let shootId: string;
  let prefix: string;
  let clientEmail: string;
  const frames: Record<string, string> = {};
  const uploads: Record<string, { bytes: Buffer; width: number; height: number }> = {};
  const finalIds: Record<string, string> = {};
  // Names a hostile or unlucky studio might type: quotes, line breaks, slashes, percent signs, accents.
  const clientName = 'Zoë "Q" O\'Neil\r\nSet-Cookie: a=b';
  const title = 'Spring/“headshots”\\..; 100% \u202Egnp.exe';
  const base = 'Zoë-Q-O-Neil-Set-Cookie-a-b_Spring-headshots-100-gnp-exe';

  beforeAll(async () => {
    scratch = mkdtempSync(path.join(os.tmpdir(), 'fillcard-finals-test-'));
    studio = await makeStudio('Finals');
    other = await makeStudio('FinalsOther');
    owner = await memberAgent(studio.owner.email);
    retoucher = await memberAgent(studio.retoucher.email);
    otherRetoucher = await memberAgent(other.retoucher.email);
    const made = await makeShoot(studio.studioId, { stage: 'draft' });
    shootId = made.shoot.id;
    clientEmail = made.client.email;
    prefix = keys.shootPrefix(studio.studioId, shootId);
    await db()('clients').where({ id: made.client.id }).update({ name: clientName });
    await db()('shoots').where({ id: shootId }).update({ title });

    // Three frames through the real upload path, then picks as the client would have sent them.
    for (const [i, name] of ['HLP_2041.jpg', 'HLP_2042.jpg', 'HLP_2043.jpg'].entries()) {
      const bytes = await syntheticPortrait({ width: 900, height: 1200, seed: 500 + i, exif: { DateTimeOriginal: `2026:03:0${i + 1} 10:00:00` } });
      const r = await sendFile(owner, `/api/shoots/${shootId}/uploads/sign`, `/api/shoots/${shootId}/frames`, name, bytes);
      expect(r.status, r.body.error).toBe(201);
      frames[name] = r.body.id;
    }
    for (const id of Object.values(frames)) expect((await frameReady(id)).state).toBe('ready');
    await db()('picks').insert(Object.values(frames).map((frameId, i) => ({ studio_id: studio.studioId, shoot_id: shootId, frame_id: frameId, note: `Note ${i + 1}: soften the shadow` })));
    await db()('shoots').where({ id: shootId }).update({ stage: 'retouching', picks_submitted_at: new Date(), link_sent_at: new Date() });
    client = await clientAgent(made.token);
    clientB = await clientAgent((await makeShoot(studio.studioId)).token);
  });

  afterAll(() => {
    removeTempFiles();
    rmSync(scratch, { recursive: true, force: true });
  });

  const finalsSign = () => `/api/shoots/${shootId}/finals/uploads/sign`;
  const finalsRegister = () => `/api/shoots/${shootId}/finals`;

  it('matches edited file names to their picks and leaves an unknown name for matching by hand', async () => {
    const specs: [string, number, number, number][] = [
      ['HLP_2041-edit.jpg', 1500, 2000, 11],
      ['hlp_2042_FINAL.jpg', 1200, 1800, 12],
      ['garden-portrait-for-zoe.jpg', 1000, 1250, 13],
    ];
    for (const [name, width, height, seed] of specs) {
      // Finals come back from editors in wide-gamut colour with the camera's tags and a GPS position.
      const plain = await syntheticPortrait({ width, height, seed, exif: { Make: 'Northlight Optics', GPSLatitude: 51.5, GPSLatitudeRef: 'N', GPSLongitude: 0.12, GPSLongitudeRef: 'W' } });
      const bytes = await sharp(plain).withIccProfile('p3').keepExif().jpeg({ quality: 92 }).toBuffer();
      uploads[name] = { bytes, width, height };
    }
    const a = await sendFile(retoucher, finalsSign(), finalsRegister(), 'HLP_2041-edit.jpg', uploads['HLP_2041-edit.jpg']!.bytes);
    expect(a.status, a.body.error).toBe(201);
    expect(a.body).toMatchObject({ outcome: 'matched', pick: { frameId: frames['HLP_2041.jpg'], name: 'HLP_2041.jpg' } });
    expect(a.key.startsWith(`${prefix}finals/`)).toBe(true);
    const b = await sendFile(retoucher, finalsSign(), finalsRegister(), 'hlp_2042_FINAL.jpg', uploads['hlp_2042_FINAL.jpg']!.bytes);
    expect(b.body).toMatchObject({ outcome: 'matched', pick: { name: 'HLP_2042.jpg' } });
    const c = await sendFile(retoucher, finalsSign(), finalsRegister(), 'garden-portrait-for-zoe.jpg', uploads['garden-portrait-for-zoe.jpg']!.bytes);
    expect(c.body).toMatchObject({ outcome: 'unmatched', pick: null });
    finalIds.a = a.body.id;
    finalIds.b = b.body.id;
    finalIds.c = c.body.id;

    const desk = await (await retoucher.get(`/api/shoots/${shootId}/finals`)).json();
    expect(desk.unmatched.map((u: { name: string }) => u.name)).toEqual(['garden-portrait-for-zoe.jpg']);
    expect(desk.downloads).toBeNull(); // the log is the owner's
    // Whoever matches by hand can look at the file first; it opens in the browser, not as a download.
    const view = await retoucher.get(`/api/shoots/${shootId}/finals/${finalIds.c}/file`);
    expect(view.status).toBe(302);
    const shown = await fetch(view.headers.get('location')!);
    expect(shown.headers.get('content-type')).toBe('image/jpeg');
    expect(shown.headers.get('content-disposition')).toBeNull();
    expect(Buffer.from(await shown.arrayBuffer()).equals(uploads['garden-portrait-for-zoe.jpg']!.bytes)).toBe(true);
    expect(desk.picks.map((p: { note: string }) => p.note)).toEqual(['Note 1: soften the shadow', 'Note 2: soften the shadow', 'Note 3: soften the shadow']);

    const matched = await retoucher.postJson(`/api/shoots/${shootId}/finals/${finalIds.c}/match`, { frameId: frames['HLP_2043.jpg'] });
    expect(matched.status).toBe(200);
    for (const id of [finalIds.a, finalIds.b, finalIds.c]) expect((await finalSettled(id!)).state).toBe('ready');
    const after = await (await owner.get(`/api/shoots/${shootId}/finals`)).json();
    expect(after.counts).toMatchObject({ picks: 3, ready: 3, unmatched: 0 });
    expect(after.picks.every((p: { state: string }) => p.state === 'ready')).toBe(true);
  });

  it('delivers each final at the upload’s pixel size in sRGB (identify), camera tags kept and GPS dropped (ExifTool)', async () => {
    for (const [id, name] of [[finalIds.a, 'HLP_2041-edit.jpg'], [finalIds.b, 'hlp_2042_FINAL.jpg'], [finalIds.c, 'garden-portrait-for-zoe.jpg']] as const) {
      const full = await db()('final_variants').where({ final_id: id, kind: 'full' }).first();
      const seen = await identifyObject(full.object_key);
      expect({ width: seen.width, height: seen.height }).toEqual({ width: uploads[name]!.width, height: uploads[name]!.height });
      expect(seen.space).toBe('sRGB');
      expect(seen.icc).toMatch(/sRGB/i);
      const { stdout } = await run(EXIFTOOL, ['-j', '-n', tempFile(await getObjectBuffer(full.object_key))]);
      const tags = JSON.parse(stdout)[0];
      expect(tags.Make).toBe('Northlight Optics');
      expect(tags.GPSLatitude).toBeUndefined();
      expect(tags.GPSLongitude).toBeUndefined();
    }
  });

  it('cuts crops with exact ratios (to the pixel), the 8×10 print at full resolution', async () => {
    // Social shapes 4:5, 1:1, 9:16: common practice, no published source; an 8×10 print is 4:5.
    const ratio: Record<string, [number, number]> = { crop_4x5: [4, 5], crop_1x1: [1, 1], crop_9x16: [9, 16], print_8x10: [8, 10] };
    for (const id of [finalIds.a, finalIds.b, finalIds.c]) {
      const rows = await db()('final_variants').where({ final_id: id }).whereIn('kind', Object.keys(ratio));
      expect(rows.map((r) => r.kind).sort()).toEqual(Object.keys(ratio).sort());
      const full = await db()('final_variants').where({ final_id: id, kind: 'full' }).first();
      for (const r of rows) {
        const seen = await identifyObject(r.object_key);
        const [rw, rh] = ratio[r.kind]!;
        // The long side fills the frame; the other is within one pixel of the exact ratio.
        expect(Math.abs(seen.width - (seen.height * rw) / rh), `${r.kind} ${seen.width}×${seen.height}`).toBeLessThanOrEqual(1);
        expect(seen.width === full.width || seen.height === full.height).toBe(true);
        expect(seen.space).toBe('sRGB');
      }
    }
  });

  it('keeps finals from the client until hand-off (409), and from other shoots and studios (401, 404)', async () => {
    expect((await client.get(`/api/gallery/${shootId}/finals`)).status).toBe(409);
    expect((await client.get(`/api/gallery/${shootId}/finals/${finalIds.a}?kind=full`)).status).toBe(409);
    expect((await client.get(`/api/gallery/${shootId}/finals/zip`)).status).toBe(409);
    expect((await clientB.get(`/api/gallery/${shootId}/finals`)).status).toBe(401);
    expect((await otherRetoucher.get(`/api/shoots/${shootId}/finals`)).status).toBe(404);
    expect((await otherRetoucher.get(`/api/shoots/${shootId}/finals/${finalIds.a}/download?kind=full`)).status).toBe(404);
    expect((await otherRetoucher.get(`/api/frames/${frames['HLP_2041.jpg']}/original`)).status).toBe(404);
    // The retoucher uploads and downloads, but hands off nothing.
    expect((await retoucher.postJson(`/api/shoots/${shootId}/hand-off`, {})).status).toBe(403);
  });

  it('gives the original for editing under its own name, and logs it', async () => {
    const res = await retoucher.get(`/api/frames/${frames['HLP_2042.jpg']}/original`);
    expect(res.status).toBe(302);
    const file = await fetch(res.headers.get('location')!);
    expect(parseDisposition(file.headers.get('content-disposition')).utf8).toBe('HLP_2042.jpg');
    expect(Buffer.from(await file.arrayBuffer()).length).toBeGreaterThan(1000);
    const row = await db()('downloads').where({ shoot_id: shootId, what: 'original' }).first();
    expect(row).toMatchObject({ frame_id: frames['HLP_2042.jpg'], actor_kind: 'member', actor_id: studio.retoucher.id });

    // Viewing it in the browser (to judge focus without the watermark) opens it inline and is not a download.
    const view = await retoucher.get(`/api/frames/${frames['HLP_2041.jpg']}/original?view=1`);
    expect(view.status).toBe(302);
    const shown = await fetch(view.headers.get('location')!);
    expect(shown.headers.get('content-disposition')).toMatch(/^inline; /);
    expect(shown.headers.get('content-type')).toBe('image/jpeg');
    await shown.arrayBuffer();
    expect(await db()('downloads').where({ shoot_id: shootId, what: 'original' }).count('* as n').first()).toMatchObject({ n: 1 });
  });

  it('replaces a final only after a yes, keeping the old one until the new one is ready, then deleting its objects', async () => {
    const bytes = await sharp(await syntheticPortrait({ width: 1500, height: 2000, seed: 99 })).jpeg({ quality: 90 }).toBuffer();
    const up = await sendFile(retoucher, finalsSign(), finalsRegister(), 'HLP_2041_v2.jpg', bytes);
    expect(up.status).toBe(201);
    expect(up.body).toMatchObject({ outcome: 'confirm', pick: { name: 'HLP_2041.jpg' } });
    const old = await db()('finals').where({ id: finalIds.a }).first();
    const oldKeys = [old.object_key, ...(await db()('final_variants').where({ final_id: finalIds.a }).pluck('object_key'))];

    const ask = await retoucher.postJson(`/api/shoots/${shootId}/finals/${up.body.id}/match`, { frameId: frames['HLP_2041.jpg'] });
    expect(ask.status).toBe(409);
    expect(await ask.json()).toMatchObject({ needsConfirmation: true, error: expect.stringContaining('has a final already') });
    expect((await db()('finals').where({ id: finalIds.a }).first()).superseded_at).toBeNull();

    const yes = await retoucher.postJson(`/api/shoots/${shootId}/finals/${up.body.id}/match`, { frameId: frames['HLP_2041.jpg'], replace: true });
    expect(yes.status).toBe(200);
    expect((await finalSettled(up.body.id)).state).toBe('ready');
    const replaced = await db()('finals').where({ id: finalIds.a }).first();
    expect(replaced.superseded_at).not.toBeNull();
    expect(await db()('finals').where({ id: up.body.id }).first()).toMatchObject({ frame_id: frames['HLP_2041.jpg'], pending_frame_id: null });
    // The old objects go right after the new final takes its place.
    const stored = await until('old objects removed', async () => {
      const keysNow = new Set(await listKeys(prefix));
      return oldKeys.every((k) => !keysNow.has(k)) ? keysNow : null;
    });
    expect(stored.has(up.key)).toBe(true);
    finalIds.a = up.body.id;
  });

  it('refuses a file whose contents are not the image its name says, and removes it', async () => {
    const up = await sendFile(retoucher, finalsSign(), finalsRegister(), 'HLP_2043-edit.jpg', Buffer.from('Retouch notes: lift the shadows a little.\n'));
    expect(up.status).toBe(422);
    expect(up.body.error).toBe('“HLP_2043-edit.jpg” is a text file, not a photo. Fillcard takes JPEG, PNG, TIFF or WebP files.');
    expect((await listKeys(up.key)).length).toBe(0);
    expect(await db()('finals').where({ object_key: up.key }).first()).toBeUndefined();
  });

  it('hands off with the client’s existing link, e-mailing them the download date', async () => {
    const res = await owner.postJson(`/api/shoots/${shootId}/hand-off`, {});
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({ finals: 3, missing: 0, newLink: null });
    const shoot = await db()('shoots').where({ id: shootId }).first();
    expect(shoot.stage).toBe('delivered');
    const studioRow = await db()('studios').where({ id: studio.studioId }).first('download_expiry_days');
    const days = (new Date(shoot.download_until).getTime() - Date.now()) / 86_400_000;
    expect(Math.abs(days - studioRow.download_expiry_days)).toBeLessThan(0.01);
    const mail = await waitForMail(clientEmail, /are ready/);
    expect(mail.text).toContain('same link as before');
    expect(mail.text).toContain('Downloads stay open until');
    // The client's link and session keep working.
    expect((await client.get(`/api/gallery/${shootId}/finals`)).status).toBe(200);
    expect((await owner.postJson(`/api/shoots/${shootId}/hand-off`, {})).status).toBe(409);
  });

  it('lets the client download one final through a five-minute link with a safe, meaningful file name', async () => {
    const data = await (await client.get(`/api/gallery/${shootId}/finals`)).json();
    expect(data.finals).toHaveLength(3);
    const first = data.finals[0];
    expect(first.fileName).toBe(`${base}_01.jpg`);
    const res = await client.get(first.downloadUrl);
    expect(res.status).toBe(302);
    const url = new URL(res.headers.get('location')!);
    expect(url.searchParams.get('X-Amz-Expires')).toBe('300');
    const file = await fetch(url);
    const { ascii, utf8 } = parseDisposition(file.headers.get('content-disposition'));
    expect(utf8).toBe(`${base}_01.jpg`);
    expect(ascii).toBe('Zoe-Q-O-Neil-Set-Cookie-a-b_Spring-headshots-100-gnp-exe_01.jpg');
    const bytes = Buffer.from(await file.arrayBuffer());
    const full = await db()('final_variants').where({ final_id: first.id, kind: 'full' }).first();
    expect(bytes.equals(await getObjectBuffer(full.object_key))).toBe(true);

    const crop = first.crops.find((c: { kind: string }) => c.kind === 'crop_9x16');
    const cropRes = await client.get(crop.downloadUrl);
    const cropFile = await fetch(cropRes.headers.get('location')!);
    expect(parseDisposition(cropFile.headers.get('content-disposition')).utf8).toBe(`${base}_01_9x16.jpg`);
    await cropFile.arrayBuffer();
  });

  it('streams "download all" and "download crops" as ZIPs that pass unzip -t and hold exactly the expected names', async () => {
    const all = await client.get(`/api/gallery/${shootId}/finals/zip`);
    expect(all.status).toBe(200);
    expect(all.headers.get('content-type')).toBe('application/zip');
    expect(parseDisposition(all.headers.get('content-disposition')).utf8).toBe(`${base}_finals.zip`);
    const allFile = await saveBody(all, 'all.zip');
    // The announced length is the archive's true length, so the browser can show progress.
    expect(Number(all.headers.get('content-length'))).toBe(statSync(allFile).size);
    const zipped = await unzipCheck(allFile);
    expect(zipped.ok).toBe(true);
    expect(zipped.names).toEqual([`${base}_01.jpg`, `${base}_02.jpg`, `${base}_03.jpg`]);

    const crops = await client.get(`/api/gallery/${shootId}/finals/zip?set=crops`);
    expect(parseDisposition(crops.headers.get('content-disposition')).utf8).toBe(`${base}_crops.zip`);
    const cropsFile = await saveBody(crops, 'crops.zip');
    expect(Number(crops.headers.get('content-length'))).toBe(statSync(cropsFile).size);
    const cz = await unzipCheck(cropsFile);
    expect(cz.ok).toBe(true);
    expect(cz.names).toEqual([1, 2, 3].flatMap((n) => ['4x5', '1x1', '9x16', '8x10-print'].map((k) => `${base}_0${n}_${k}.jpg`)));

    // The same archive for the studio, from the Finals tab.
    const studioZip = await owner.get(`/api/shoots/${shootId}/finals/zip`);
    expect((await unzipCheck(await saveBody(studioZip, 'studio.zip'))).names).toHaveLength(3);
  });

  it('logs every download with who, what, when, address and browser, and shows the log to the owner', async () => {
    const rows = await db()('downloads').where({ shoot_id: shootId }).orderBy('created_at');
    expect(rows.map((r) => r.what)).toEqual(['original', 'final', 'crop', 'finals_zip', 'crops_zip', 'finals_zip']);
    for (const r of rows) {
      expect(r.ip).toBeTruthy();
      expect(r.user_agent === null || typeof r.user_agent === 'string').toBe(true);
      expect(r.created_at).toBeInstanceOf(Date);
    }
    expect(rows.filter((r) => r.actor_kind === 'client').every((r) => r.actor_id === rows[1]!.actor_id)).toBe(true);
    const log = (await (await owner.get(`/api/shoots/${shootId}/finals`)).json()).downloads;
    expect(log).toHaveLength(6);
    expect(log[log.length - 1]).toMatchObject({ whoKind: 'member', what: 'Original of HLP_2042.jpg' });
    expect(log.some((e: { who: string; what: string }) => e.who === clientName && e.what === 'All finals (ZIP)')).toBe(true);
  });

  it('fails a ZIP whose stored object is not the size on record, rather than ending it short', async () => {
    const [final] = await db()('finals').where({ shoot_id: shootId, state: 'ready' }).whereNull('superseded_at').orderBy('created_at').limit(1);
    const where = { final_id: final.id, kind: 'full' };
    const { bytes } = await db()('final_variants').where(where).first('bytes');
    await db()('final_variants').where(where).update({ bytes: bytes + 1 });
    try {
      const res = await owner.get(`/api/shoots/${shootId}/finals/zip`);
      expect(res.status).toBe(200);
      await expect(saveBody(res, 'short.zip')).rejects.toThrow();
    } finally {
      await db()('final_variants').where(where).update({ bytes });
    }
  });

  it('closes downloads after the date (410) with the studio’s contact, and reopens them when the owner extends it', async () => {
    await db()('shoots').where({ id: shootId }).update({ download_until: new Date(Date.now() - 60_000) });
    expect((await client.get(`/api/gallery/${shootId}/finals`)).status).toBe(410);
    expect((await client.get(`/api/gallery/${shootId}/finals/zip`)).status).toBe(410);
    const page = await client.get(`/gallery/${shootId}`);
    expect(page.status).toBe(410);
    const html = await page.text();
    expect(html).toContain('Downloads have closed');
    expect(html).toContain(`studio-`); // the studio's contact address from the factory

    expect((await retoucher.postJson(`/api/shoots/${shootId}/finals/extend`, { days: 7 })).status).toBe(403);
    const ext = await owner.postJson(`/api/shoots/${shootId}/finals/extend`, { days: 7 });
    expect(ext.status).toBe(200);
    const until = new Date((await ext.json()).downloadUntil).getTime();
    expect(Math.abs((until - Date.now()) / 86_400_000 - 7)).toBeLessThan(0.01);
    expect((await client.get(`/api/gallery/${shootId}/finals`)).status).toBe(200);
  });

  it('limits the ZIPs a client starts in an hour (429 with Retry-After)', async () => {
    const { client_id: clientId } = await db()('shoots').where({ id: shootId }).first('client_id');
    await db()('rate_limits').insert({ key: `zip:client:${clientId}:${shootId}`, hits: 30, window_started_at: new Date() }).onConflict('key').merge();
    const res = await client.get(`/api/gallery/${shootId}/finals/zip`);
    expect(res.status).toBe(429);
    expect(Number(res.headers.get('retry-after'))).toBeGreaterThan(0);
    await db()('rate_limits').where({ key: `zip:client:${clientId}:${shootId}` }).delete();
  });

  it('hands off partly only with a yes, and issues a new link when the old one was withdrawn', async () => {
    const made = await makeShoot(studio.studioId, { stage: 'draft' });
    const id = made.shoot.id;
    const names = ['DSC_0001.jpg', 'DSC_0002.jpg'];
    const ids: string[] = [];
    for (const [i, name] of names.entries()) {
      const r = await sendFile(owner, `/api/shoots/${id}/uploads/sign`, `/api/shoots/${id}/frames`, name, await syntheticPortrait({ width: 600, height: 800, seed: 900 + i }));
      ids.push(r.body.id);
    }
    for (const f of ids) await frameReady(f);
    await db()('picks').insert(ids.map((frameId) => ({ studio_id: studio.studioId, shoot_id: id, frame_id: frameId })));
    await db()('shoots').where({ id }).update({ stage: 'picks_in', picks_submitted_at: new Date(), link_revoked_at: new Date(), link_token_hash: null });
    const up = await sendFile(owner, `/api/shoots/${id}/finals/uploads/sign`, `/api/shoots/${id}/finals`, 'DSC_0001 copy 2.jpg', await syntheticPortrait({ width: 600, height: 800, seed: 950 }));
    expect(up.body.outcome).toBe('matched');
    expect((await db()('shoots').where({ id }).first()).stage).toBe('retouching');
    await finalSettled(up.body.id);

    const ask = await owner.postJson(`/api/shoots/${id}/hand-off`, {});
    expect(ask.status).toBe(409);
    expect(await ask.json()).toMatchObject({ needsConfirmation: true, missing: 1, picks: 2, ready: 1 });
    const res = await owner.postJson(`/api/shoots/${id}/hand-off`, { partial: true });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.newLink).toMatch(/\/g\/[A-Za-z0-9_-]{20,}$/);
    const mail = await waitForMail(made.client.email, /are ready/);
    expect(mail.text).toContain(body.newLink);
    expect(mail.text).toContain('One more photo is still being finished');
    // The new link opens the finals.
    const fresh = await clientAgent(body.newLink.split('/g/')[1]);
    expect((await (await fresh.get(`/api/gallery/${id}/finals`)).json()).finals).toHaveLength(1);

    // Nothing new yet: nothing to tell.
    expect((await owner.postJson(`/api/shoots/${id}/finals/announce`, {})).status).toBe(409);
    // The second final arrives after the hand-off: the client sees it at once, and the owner tells them in one e-mail.
    const late = await sendFile(owner, `/api/shoots/${id}/finals/uploads/sign`, `/api/shoots/${id}/finals`, 'DSC_0002_final.jpg', await syntheticPortrait({ width: 600, height: 800, seed: 951 }));
    expect(late.body.outcome).toBe('matched');
    await finalSettled(late.body.id);
    expect((await (await fresh.get(`/api/gallery/${id}/finals`)).json()).finals).toHaveLength(2);
    expect((await (await owner.get(`/api/shoots/${id}/finals`)).json()).unannounced).toBe(1);
    expect((await retoucher.postJson(`/api/shoots/${id}/finals/announce`, {})).status).toBe(403);
    const told = await owner.postJson(`/api/shoots/${id}/finals/announce`, {});
    expect(told.status).toBe(200);
    expect(await told.json()).toEqual({ announced: 1, newLink: null });
    const more = await waitForMail(made.client.email, /More of your photos/);
    expect(more.text).toContain('One more finished photo has joined the others');
    expect(more.text).toContain('2 in all');
    expect(more.text).not.toContain('still being finished');
    expect(more.text).toContain('same link as before');
    expect((await (await owner.get(`/api/shoots/${id}/finals`)).json()).unannounced).toBe(0);
    expect((await owner.postJson(`/api/shoots/${id}/finals/announce`, {})).status).toBe(409);
  });

  it('archives the shoot (the gallery closes, 410), brings it back to delivered, and deletes it after the title is typed, leaving no object under its prefix', async () => {
    expect((await owner.postJson(`/api/shoots/${shootId}/archive`, {})).status).toBe(200);
    expect((await client.get(`/api/gallery/${shootId}/finals`)).status).toBe(410);
    expect((await client.get(`/gallery/${shootId}`)).status).toBe(410);

    // Brought back: the stage it left from, and the client's finals open again through the same session.
    expect((await retoucher.postJson(`/api/shoots/${shootId}/restore`, {})).status).toBe(403);
    const back = await owner.postJson(`/api/shoots/${shootId}/restore`, {});
    expect(back.status).toBe(200);
    expect(await back.json()).toEqual({ stage: 'delivered' });
    expect((await db()('shoots').where({ id: shootId }).first()).archived_from).toBeNull();
    expect((await client.get(`/api/gallery/${shootId}/finals`)).status).toBe(200);
    expect((await owner.postJson(`/api/shoots/${shootId}/restore`, {})).status).toBe(409);
    expect((await owner.postJson(`/api/shoots/${shootId}/archive`, {})).status).toBe(200);
    expect((await db()('shoots').where({ id: shootId }).first()).archived_from).toBe('delivered');

    expect((await listKeys(prefix)).length).toBeGreaterThan(0);
    const wrong = await owner.fetch(`/api/shoots/${shootId}`, { method: 'DELETE', json: { title: 'Spring headshots' } });
    expect(wrong.status).toBe(422);
    expect((await retoucher.fetch(`/api/shoots/${shootId}`, { method: 'DELETE', json: { title } })).status).toBe(403);
    const del = await owner.fetch(`/api/shoots/${shootId}`, { method: 'DELETE', json: { title } });
    expect(del.status).toBe(200);
    expect(await listKeys(prefix)).toEqual([]);
    for (const table of ['shoots', 'frames', 'finals', 'picks', 'downloads']) {
      expect(await db()(table).where(table === 'shoots' ? { id: shootId } : { shoot_id: shootId }).first(), table).toBeUndefined();
    }
    const audit = await db()('audit_log').where({ studio_id: studio.studioId, action: 'shoot.deleted', subject_id: shootId }).first();
    expect(audit.details).toMatchObject({ title, frames: 3, picks: 3, finals: 3 });
    expect((await owner.get(`/desk/shoots/${shootId}/finals`)).status).toBe(404);
  });
});
