/**
 * Delivering finals in a real browser: the retoucher uploads edited files through the Uppy
 * uploader, two match their picks by name and one is matched by hand from the picks' thumbnails,
 * the owner hands off, and the client downloads one final and the ZIP through the viewing link.
 * The archive is checked with Info-ZIP (`unzip -t`, `unzip -Z1`).
 */
import { test, expect, type Browser, type Page } from '@playwright/test';
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { syntheticPortrait } from '../../scripts/lib/synthetic-portrait';
import { makeStudio, makeShoot, memberAgent, type TestStudio } from '../support/factories';
import type { Agent } from '../support/http';
import { hydrated, signIn } from '../support/browser';
import { db } from '../../src/lib/server/db';

const run = promisify(execFile);

async function sendFile(agent: Agent, shootId: string, kind: 'frames' | 'finals', name: string, bytes: Buffer): Promise<string> {
  const signPath = kind === 'frames' ? `/api/shoots/${shootId}/uploads/sign` : `/api/shoots/${shootId}/finals/uploads/sign`;
  const signed = await (await agent.postJson(signPath, { method: 'PUT', key: '', fileName: name, size: bytes.length })).json();
  await (await fetch(signed.url, { method: 'PUT', headers: signed.headers, body: new Uint8Array(bytes) })).arrayBuffer();
  const reg = await agent.postJson(kind === 'frames' ? `/api/shoots/${shootId}/frames` : `/api/shoots/${shootId}/finals`, { key: signed.key, name, size: bytes.length });
  expect(reg.status).toBe(201);
  return (await reg.json()).id;
}

async function settled(table: 'frames' | 'finals', ids: string[]) {
  await expect.poll(async () => (await db()(table).whereIn('id', ids).pluck('state')).filter((s) => s === 'ready').length, { timeout: 90_000 }).toBe(ids.length);
}

/** A shoot in retouching: three frames through the real pipeline, all picked with notes. */
async function shootInRetouching(studio: TestStudio) {
  const owner = await memberAgent(studio.owner.email);
  const made = await makeShoot(studio.studioId, { stage: 'draft' });
  await db()('clients').where({ id: made.client.id }).update({ name: 'Mira Calloway' });
  await db()('shoots').where({ id: made.shoot.id }).update({ title: 'Spring headshots' });
  const frameIds: string[] = [];
  for (const [i, name] of ['HLP_2041.jpg', 'HLP_2042.jpg', 'HLP_2043.jpg'].entries()) {
    frameIds.push(await sendFile(owner, made.shoot.id, 'frames', name, await syntheticPortrait({ width: 800, height: 1000, seed: 60 + i, exif: { DateTimeOriginal: `2026:04:0${i + 1} 09:00:00` } })));
  }
  await settled('frames', frameIds);
  const notes = ['Soften the shadow under the chin.', '', 'Warmer, please.'];
  await db()('picks').insert(frameIds.map((frameId, i) => ({ studio_id: studio.studioId, shoot_id: made.shoot.id, frame_id: frameId, note: notes[i] })));
  await db()('shoots').where({ id: made.shoot.id }).update({ stage: 'retouching', picks_submitted_at: new Date(), link_sent_at: new Date() });
  return { ...made, owner, frameIds };
}

async function signedIn(browser: Browser, email: string): Promise<Page> {
  const page = await (await browser.newContext()).newPage();
  await signIn(page, email);
  return page;
}

const BASE = 'Mira-Calloway_Spring-headshots';

test('the retoucher uploads and matches finals, the owner hands off, the client downloads a final and the ZIP', async ({ browser }) => {
  test.setTimeout(240_000);
  const studio = await makeStudio('FinalsE2E');
  const shoot = await shootInRetouching(studio);
  const finals = [];
  for (const [i, name] of ['HLP_2041-edit.jpg', 'hlp_2042_FINAL.jpg', 'window-light-portrait.jpg'].entries()) {
    finals.push({ name, mimeType: 'image/jpeg', buffer: await syntheticPortrait({ width: 1600, height: 2000, seed: 160 + i }) });
  }

  // The retoucher: the pick list with notes, then finals through the real uploader.
  const retoucher = await signedIn(browser, studio.retoucher.email);
  await retoucher.goto(`/desk/shoots/${shoot.shoot.id}/finals`);
  await hydrated(retoucher);
  const list = retoucher.getByTestId('retouch-list');
  await expect(list.getByTestId('retouch-item')).toHaveCount(3);
  await expect(list.getByText('Soften the shadow under the chin.')).toBeVisible();
  await expect(list.locator('[data-frame="HLP_2041.jpg"] [data-testid=pick-state]')).toHaveText('Waiting for a final');
  // The original, for editing, keeps its own file name.
  const [original] = await Promise.all([
    retoucher.waitForEvent('download'),
    list.locator('[data-frame="HLP_2042.jpg"]').getByRole('link', { name: 'Original for editing' }).click(),
  ]);
  expect(original.suggestedFilename()).toBe('HLP_2042.jpg');
  await original.cancel();

  await retoucher.locator('.fc-uploader input[type=file]').first().setInputFiles(finals);
  const outcomes = retoucher.getByTestId('upload-outcomes');
  await expect(outcomes).toContainText('HLP_2041-edit.jpg: matched to HLP_2041.jpg', { timeout: 60_000 });
  await expect(outcomes).toContainText('hlp_2042_FINAL.jpg: matched to HLP_2042.jpg');
  await expect(outcomes).toContainText('window-light-portrait.jpg: no pick has this name');

  // The third is matched by hand, from the thumbnails of the picks still waiting.
  const unmatched = retoucher.locator('[data-testid=unmatched-item][data-name="window-light-portrait.jpg"]');
  await expect(unmatched).toContainText('No pick has a name like this.');
  await unmatched.getByRole('button', { name: 'Choose its pick' }).click();
  const choices = unmatched.getByTestId('match-choice');
  await expect(choices).toHaveCount(1);
  await expect(choices.first()).toHaveAttribute('data-frame', 'HLP_2043.jpg');
  await expect(choices.first().locator('img')).toBeVisible();
  await choices.first().click();
  await expect(retoucher.getByTestId('unmatched')).toHaveCount(0);
  await expect(retoucher.getByTestId('finals-counts')).toContainText('3 of 3 picks have a final', { timeout: 90_000 });
  await expect(list.locator('[data-state=ready]')).toHaveCount(3);
  // Only the owner hands off.
  await expect(retoucher.getByRole('button', { name: 'Hand off finals' })).toHaveCount(0);

  // The owner hands off.
  const owner = await signedIn(browser, studio.owner.email);
  await owner.goto(`/desk/shoots/${shoot.shoot.id}/finals`);
  await hydrated(owner);
  await owner.getByRole('button', { name: 'Hand off finals' }).click();
  await owner.getByRole('button', { name: 'Hand off and e-mail' }).click();
  await expect(owner.getByRole('status').filter({ hasText: 'Handed off.' })).toBeVisible();
  await expect(owner.locator('[data-stage]').first()).toHaveAttribute('data-stage', 'delivered');
  // The panel is drawn for the side column and for narrow screens; one of them shows.
  await expect(owner.getByTestId('download-until').filter({ visible: true })).toContainText('Mira Calloway can download until');

  // The client, through the same viewing link as before.
  const client = await (await browser.newContext()).newPage();
  await client.goto(`/g/${shoot.token}`);
  await hydrated(client);
  await expect(client.getByRole('heading', { name: 'Spring headshots' })).toBeVisible();
  await expect(client.getByTestId('final-card')).toHaveCount(3);
  await expect(client.getByTestId('download-until')).toContainText('Downloads close on');

  const [one] = await Promise.all([client.waitForEvent('download'), client.getByTestId('download-final').first().click()]);
  expect(one.suggestedFilename()).toBe(`${BASE}_01.jpg`);
  const onePath = await one.path();
  const { stdout: size } = await run('/usr/bin/identify', ['-format', '%w %h %[colorspace]', onePath]);
  expect(size.trim()).toBe('1600 2000 sRGB');

  const [zip] = await Promise.all([client.waitForEvent('download'), client.getByTestId('download-all').click()]);
  expect(zip.suggestedFilename()).toBe(`${BASE}_finals.zip`);
  const zipPath = await zip.path();
  const tested = await run('/usr/bin/unzip', ['-t', zipPath]);
  expect(tested.stdout).toContain('No errors detected');
  const listed = await run('/usr/bin/unzip', ['-Z1', zipPath]);
  expect(listed.stdout.trim().split('\n')).toEqual([`${BASE}_01.jpg`, `${BASE}_02.jpg`, `${BASE}_03.jpg`]);

  // The owner sees both downloads in the log.
  await owner.reload();
  const log = owner.getByTestId('downloads-log');
  await expect(log.getByTestId('download-entry')).toHaveCount(3);
  await expect(log).toContainText('Mira Calloway (client) · All finals (ZIP)');
  await expect(log).toContainText('Mira Calloway (client) · Final of HLP_2041.jpg');
  await expect(log).toContainText('(studio) · Original of HLP_2042.jpg');
});

test('@phone the client saves a ratio crop of a final on a phone', async ({ page }) => {
  test.setTimeout(180_000);
  const studio = await makeStudio('FinalsPhone');
  const shoot = await shootInRetouching(studio);
  const ids = [];
  for (const [i, name] of ['HLP_2041_final.jpg', 'HLP_2042_final.jpg', 'HLP_2043_final.jpg'].entries()) {
    ids.push(await sendFile(shoot.owner, shoot.shoot.id, 'finals', name, await syntheticPortrait({ width: 1200, height: 1500, seed: 260 + i })));
  }
  await settled('finals', ids);
  expect((await shoot.owner.postJson(`/api/shoots/${shoot.shoot.id}/hand-off`, {})).status).toBe(200);

  await page.goto(`/g/${shoot.token}`);
  await hydrated(page);
  await expect(page.getByTestId('download-all')).toBeVisible();
  const card = page.getByTestId('final-card').nth(1);
  await card.getByText('Crops for posting and print').click();
  const crop = card.locator('[data-testid=download-crop][data-kind=crop_4x5]');
  await expect(crop.locator('img')).toBeVisible();
  const [file] = await Promise.all([page.waitForEvent('download'), crop.click()]);
  expect(file.suggestedFilename()).toBe(`${BASE}_02_4x5.jpg`);
  const { stdout } = await run('/usr/bin/identify', ['-format', '%w %h', await file.path()]);
  const [w, h] = stdout.trim().split(' ').map(Number);
  // 4:5 to the pixel (common practice for portrait posts; no published source).
  expect(Math.abs(w! - (h! * 4) / 5)).toBeLessThanOrEqual(1);
});
