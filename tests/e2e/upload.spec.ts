/**
 * Uploading a shoot end to end, in a real browser: the new-shoot form, Uppy sending straight to the
 * object store through presigned requests, registration, the worker building every frame, the
 * frames board and the frame panel with its EXIF and focus point.
 */
import { test, expect, type Page } from '@playwright/test';
import { randomUUID } from 'node:crypto';
import { syntheticPortrait } from '../../scripts/lib/synthetic-portrait';
import { makeStudio, PASSWORD } from '../support/factories';
import sharp from 'sharp';
import { db } from '../../src/lib/server/db';
import { signIn } from '../support/browser';

// Invented maker and lens names only; the values are what ExifTool writes and reads back.
const EXIF = {
  Make: 'Northlight Optics',
  Model: 'NL-7 Studio',
  LensModel: 'Northlight 85mm F1.8',
  ExposureTime: '1/250',
  FNumber: 5.6,
  ISO: 100,
  FocalLength: 85,
  // The EXIF group named: a bare Flash tag goes to XMP when ExifTool writes it.
  'EXIF:Flash': 1,
};

/** Frames named in shooting order; every tenth carries camera settings and a capture time. */
async function makeFrames(count: number, width: number, height: number) {
  const files = [];
  for (let i = 1; i <= count; i++) {
    const exif =
      i % 10 === 1
        ? { ...EXIF, DateTimeOriginal: `2026:03:14 10:${String(i).padStart(2, '0')}:00`, OffsetTimeOriginal: '+01:00' }
        : undefined;
    const buffer = await syntheticPortrait({ width, height, seed: 9000 + i, exif, quality: 85 });
    files.push({ name: `sitting-${String(i).padStart(3, '0')}.jpg`, mimeType: 'image/jpeg', buffer });
  }
  return files;
}

async function createShootThroughForm(page: Page, title: string) {
  await page.goto('/desk');
  await page.getByRole('link', { name: /New shoot|Create your first shoot/ }).first().click();
  await expect(page.getByRole('heading', { name: 'New shoot', level: 1 })).toBeVisible();
  await page.getByLabel('A new client').check();
  await page.getByLabel('Name', { exact: true }).fill('Ilse Varga-Moon');
  await page.getByLabel('E-mail').fill(`ilse-${randomUUID().slice(0, 6)}@example.test`);
  await page.getByLabel('Title').fill(title);
  await page.getByLabel('Retouches included').fill('5');
  // A price with a thousands separator is refused with a clear message, then typed plainly.
  await page.getByLabel('Price per extra retouch').fill('1,000');
  await page.getByRole('button', { name: 'Create shoot' }).click();
  await expect(page.getByText(/leave out thousands separators/)).toBeVisible();
  await page.getByLabel('Price per extra retouch').fill('32.50');
  await page.getByLabel('Tax rate').fill('20');
  await expect(page.getByText('Fillcard computes tax from your rate; you stay responsible for local tax rules.')).toBeVisible();
  await page.getByRole('button', { name: 'Create shoot' }).click();
  await expect(page).toHaveURL(/\/desk\/shoots\/[0-9a-f-]{36}$/);
  const shootId = page.url().split('/').pop()!;
  const shoot = await db()('shoots').where({ id: shootId }).first();
  expect(shoot).toMatchObject({ title, allowance: 5, extra_price_minor: 3250, currency: 'EUR', tax_rate_bp: 2000, tax_mode: 'exclusive' });
  return shootId;
}

async function uploadThroughUppy(page: Page, files: { name: string; mimeType: string; buffer: Buffer }[]) {
  // Uppy's own hidden file input, as the "browse" link uses it.
  await page.locator('.fc-uploader input[type=file]').first().setInputFiles(files);
}

test('an owner creates a shoot, uploads 50 frames and works on one in the frame panel', async ({ page }) => {
  test.setTimeout(240_000);
  const studio = await makeStudio('Upload');
  const frames = await makeFrames(50, 1600, 1067);
  await signIn(page, studio.owner.email);
  const shootId = await createShootThroughForm(page, 'Spring family sitting');

  await expect(page.getByRole('heading', { name: 'No frames yet' })).toBeVisible();
  await uploadThroughUppy(page, frames);

  // Upload progress: our total line and bar, then every file sent and added.
  const summary = page.getByTestId('upload-summary');
  await expect(summary).toBeVisible();
  await expect(summary.getByRole('progressbar', { name: 'Upload progress' })).toBeVisible();
  await expect(summary).toContainText('50 of 50 files sent', { timeout: 90_000 });
  await expect(summary).toContainText('50 added to the shoot', { timeout: 60_000 });
  await expect(page.getByTestId('upload-problems')).toHaveCount(0);

  // Processing progress updates without a reload until every frame is ready.
  const processing = page.getByTestId('processing');
  await expect(processing.getByRole('progressbar', { name: 'Processing progress' })).toBeVisible();
  await expect(page.getByTestId('processing-counts')).toContainText('50 ready', { timeout: 150_000 });
  await expect(page.getByTestId('processing-counts')).toContainText('0 failed');
  await expect(processing.getByRole('progressbar', { name: 'Processing progress' })).toHaveAttribute('aria-valuenow', '50');
  const states = await db()('frames').where({ shoot_id: shootId }).pluck('state');
  expect(states).toHaveLength(50);
  expect(new Set(states)).toEqual(new Set(['ready']));

  // The board: frames with a capture time first, in capture order, then the rest by name.
  const tiles = page.getByTestId('frames-board').locator('button[data-frame-id]');
  await expect(tiles).toHaveCount(50);
  await expect(tiles.first()).toHaveAttribute('aria-label', 'sitting-001.jpg');
  await expect(tiles.nth(1)).toHaveAttribute('aria-label', 'sitting-011.jpg');
  await expect(tiles.nth(5)).toHaveAttribute('aria-label', 'sitting-002.jpg');
  const thumb = tiles.first().locator('img');
  await expect(thumb).toHaveAttribute('width', '480');
  await expect(thumb).toHaveAttribute('height', '320');

  // The frame panel shows what the camera wrote.
  await tiles.nth(1).click();
  const panel = page.getByTestId('frame-panel');
  await expect(panel.getByRole('heading', { name: 'sitting-011.jpg' })).toBeVisible();
  const facts = panel.getByTestId('frame-facts');
  await expect(facts.locator('[data-fact="Shutter"]')).toHaveText('1/250 s');
  await expect(facts.locator('[data-fact="Aperture"]')).toHaveText('f/5.6');
  await expect(facts.locator('[data-fact="ISO"]')).toHaveText('100');
  await expect(facts.locator('[data-fact="EV at ISO 100"]')).toHaveText('12.9');
  await expect(facts.locator('[data-fact="Lens"]')).toHaveText('Northlight 85mm F1.8');
  await expect(facts.locator('[data-fact="Flash"]')).toHaveText('Fired');
  await expect(facts.locator('[data-fact="Taken"]')).toHaveText('14 Mar 2026, 10:11:00 (UTC+01:00)');

  // Arrow keys move between frames.
  await page.keyboard.press('ArrowRight');
  await expect(panel.getByRole('heading', { name: 'sitting-021.jpg' })).toBeVisible();
  await page.keyboard.press('ArrowLeft');
  await expect(panel.getByRole('heading', { name: 'sitting-011.jpg' })).toBeVisible();

  // Moving the focus point to the other side rebuilds the crops around it.
  const frameRow = await db()('frames').where({ shoot_id: shootId, original_name: 'sitting-011.jpg' }).first();
  const crop = panel.locator('img[data-crop="crop_4x5"]');
  const cropBefore = await crop.getAttribute('src');
  const area = panel.getByTestId('focus-area');
  const box = (await area.boundingBox())!;
  const targetX = frameRow.focus_x < 0.5 ? 0.9 : 0.1;
  await area.click({ position: { x: box.width * targetX, y: box.height * 0.4 } });
  const point = panel.getByTestId('focus-point');
  const placedY = Number(await point.getAttribute('data-y'));
  expect(placedY).toBeCloseTo(0.4, 1);
  await point.focus();
  await page.keyboard.press('ArrowDown');
  await expect.poll(async () => Number(await point.getAttribute('data-y'))).toBeCloseTo(placedY + 0.02, 2);
  await panel.getByRole('button', { name: 'Save focus point' }).click();
  await expect(panel.getByRole('status')).toContainText('Focus point saved');
  const saved = await db()('frames').where({ id: frameRow.id }).first();
  expect(saved.focus_x).toBeCloseTo(targetX, 1);
  expect(saved.focus_y).toBeCloseTo(placedY + 0.02, 2);
  await expect.poll(async () => (await db()('frames').where({ id: frameRow.id }).first()).crops_pending, { timeout: 60_000 }).toBe(false);
  await expect(crop).not.toHaveAttribute('src', cropBefore!, { timeout: 30_000 });
  await expect(panel.getByTestId('crops-pending')).toHaveCount(0, { timeout: 30_000 });

  // Esc closes the panel.
  await page.keyboard.press('Escape');
  await expect(panel).toHaveCount(0);
});

test('on a phone, an owner uploads a few frames, hides one and deletes another @phone', async ({ page }) => {
  test.setTimeout(120_000);
  const studio = await makeStudio('Phone');
  const frames = await makeFrames(3, 1200, 800);
  await signIn(page, studio.owner.email);
  const shootId = await createShootThroughForm(page, 'Headshots');
  await uploadThroughUppy(page, frames);
  await expect(page.getByTestId('processing-counts')).toContainText('3 ready', { timeout: 90_000 });

  const tiles = page.getByTestId('frames-board').locator('button[data-frame-id]');
  await tiles.nth(1).click();
  const panel = page.getByTestId('frame-panel');
  await expect(panel.getByRole('heading', { name: 'sitting-002.jpg' })).toBeVisible();
  await panel.getByRole('button', { name: 'Hide from the client' }).click();
  await expect(panel.getByRole('button', { name: 'Show to the client' })).toBeVisible();
  await panel.getByRole('button', { name: 'Next frame' }).click();
  await expect(panel.getByRole('heading', { name: 'sitting-003.jpg' })).toBeVisible();
  await panel.getByRole('button', { name: 'Delete…' }).click();
  await panel.getByRole('button', { name: 'Delete frame' }).click();
  await expect(panel.getByRole('heading', { name: 'sitting-002.jpg' })).toBeVisible();
  await panel.getByRole('button', { name: 'Close' }).click();

  await expect(tiles).toHaveCount(2);
  await expect(tiles.nth(1)).toHaveAttribute('aria-label', 'sitting-002.jpg, hidden');
  const rows = await db()('frames').where({ shoot_id: shootId }).orderBy('original_name').select('original_name', 'hidden');
  expect(rows).toEqual([
    { original_name: 'sitting-001.jpg', hidden: false },
    { original_name: 'sitting-002.jpg', hidden: true },
  ]);
});

test('a large TIFF goes up in parts and becomes a frame', async ({ page }) => {
  test.setTimeout(120_000);
  const studio = await makeStudio('Parts');
  // Uncompressed 8-bit RGB: 2400 × 1600 × 3 bytes is about 11 MB, above the 8 MB line for parts.
  const tiff = await sharp(await syntheticPortrait({ width: 2400, height: 1600, seed: 555 })).tiff({ compression: 'none' }).toBuffer();
  expect(tiff.length).toBeGreaterThan(8 * 1024 * 1024);
  const signed: { method: string; uploadId?: string; partNumber?: number }[] = [];
  page.on('request', (r) => {
    if (r.url().endsWith('/uploads/sign')) signed.push(JSON.parse(r.postData() ?? '{}'));
  });
  await signIn(page, studio.owner.email);
  const shootId = await createShootThroughForm(page, 'Large files');
  await uploadThroughUppy(page, [{ name: 'scan.tif', mimeType: 'image/tiff', buffer: tiff }]);
  await expect(page.getByTestId('upload-summary')).toContainText('1 added to the shoot', { timeout: 60_000 });
  await expect(page.getByTestId('processing-counts')).toContainText('1 ready', { timeout: 60_000 });
  // Started as a multipart upload, two parts, then completed.
  expect(signed.filter((s) => s.method === 'POST' && !s.uploadId)).toHaveLength(1);
  expect(signed.filter((s) => s.method === 'PUT' && s.partNumber).map((s) => s.partNumber)).toEqual([1, 2]);
  expect(signed.filter((s) => s.method === 'POST' && s.uploadId)).toHaveLength(1);
  const frame = await db()('frames').where({ shoot_id: shootId }).first();
  expect(frame).toMatchObject({ original_name: 'scan.tif', bytes: tiff.length, state: 'ready', width: 2400, height: 1600 });
});
