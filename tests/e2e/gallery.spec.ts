/**
 * The picking flow in a real browser, at phone (390 px) and desktop (1280 px) widths: the owner
 * sends the viewing link from the Client & picks tab, the client opens it from the e-mail, enters
 * the passcode, picks frames with notes in the full-screen viewer using the keyboard (and a swipe
 * on the phone), compares two frames, reviews and sends; the studio's e-mail arrives.
 * Accessibility checks use axe-core (the Deque engine, WCAG 2.x A/AA rules).
 */
import { test, expect, type Page, type Locator } from '@playwright/test';
import { randomUUID } from 'node:crypto';
import { makeStudio, makeShoot, PASSWORD } from '../support/factories';
import { waitForMail, firstLink } from '../support/mail';
import { db } from '../../src/lib/server/db';
import { keys, putObject } from '../../src/lib/server/storage';
import { processFrame } from '../../src/jobs/frame-process';
import { syntheticPortrait } from '../../scripts/lib/synthetic-portrait';
import { expectNoSeriousViolations, hydrated } from '../support/browser';

/** Frames made by Fillcard's own image pipeline from synthetic portraits, so the proofs are real watermarked proofs. */
async function pipelineFrames(studioId: string, shootId: string, count: number, seed: number) {
  for (let i = 0; i < count; i++) {
    const original = await syntheticPortrait({ width: 1500, height: 1000, seed: seed + i });
    const key = keys.original(studioId, shootId, 'jpg');
    await putObject(key, original, 'image/jpeg');
    const [frame] = await db()('frames').insert({
      studio_id: studioId, shoot_id: shootId, object_key: key, original_name: `NL_${String(i + 1).padStart(4, '0')}.jpg`, bytes: original.length,
    }).returning('id');
    await processFrame(frame.id, true);
    const done = await db()('frames').where({ id: frame.id }).first('state', 'error');
    expect(done, `frame ${i + 1} processed`).toEqual({ state: 'ready', error: null });
    // Capture order is the name order for these frames (no EXIF time).
  }
}

async function swipe(target: Locator, fromX: number, toX: number) {
  const box = (await target.boundingBox())!;
  const y = box.y + box.height / 2;
  await target.dispatchEvent('pointerdown', { pointerId: 7, pointerType: 'touch', isPrimary: true, clientX: box.x + fromX, clientY: y, button: 0 });
  await target.dispatchEvent('pointerup', { pointerId: 7, pointerType: 'touch', isPrimary: true, clientX: box.x + toX, clientY: y + 6, button: 0 });
}

test('an owner sends the link; the client picks with notes in the viewer, compares, reviews and sends @phone', async ({ page, browser }, info) => {
  const phone = info.project.name === 'phone';
  const studio = await makeStudio('Harbour Light');
  const clientEmail = `sitter-${randomUUID().slice(0, 8)}@example.test`;
  const { shoot } = await makeShoot(studio.studioId, { stage: 'draft', passcode: 'birch-31', allowance: 3, clientEmail });
  await pipelineFrames(studio.studioId, shoot.id, 5, phone ? 300 : 500);

  // The owner sends the viewing link with a personal message.
  const ownerContext = await browser.newContext({ viewport: { width: 1280, height: 860 } });
  const owner = await ownerContext.newPage();
  await owner.goto('/signin');
  await owner.getByLabel('E-mail').fill(studio.owner.email);
  await owner.getByLabel('Password').fill(PASSWORD);
  await owner.getByRole('button', { name: 'Sign in' }).click();
  await expect(owner).toHaveURL(/\/desk/);
  await owner.goto(`/desk/shoots/${shoot.id}/client`);
  await hydrated(owner);
  await expect(owner.getByTestId('link-state')).toHaveText('Not sent yet.');
  await owner.getByLabel('A short personal message').fill('Thank you for Saturday — take your time choosing.');
  await owner.getByRole('button', { name: 'Send the viewing link' }).click();
  await expect(owner.getByRole('status').filter({ hasText: 'Viewing link sent' })).toContainText(`Viewing link sent to ${clientEmail}`);
  await expect(owner.getByLabel('The new viewing link')).toHaveValue(/\/g\/[A-Za-z0-9_-]+$/);
  await expect(owner.getByTestId('link-state')).toContainText(`to ${clientEmail}`);

  // The client opens the e-mail's link and enters the passcode the studio gave them.
  const mail = await waitForMail(clientEmail, /^Your proofs from Harbour Light Studio/);
  expect(mail.text).toContain('Thank you for Saturday');
  expect(mail.text).not.toContain('birch-31');
  const link = firstLink(mail, /http:\/\/[^\s"<]+\/g\/[A-Za-z0-9_-]+/);
  await page.goto(link);
  await hydrated(page);
  await expect(page).toHaveURL(new RegExp(`/gallery/${shoot.id}/passcode$`));
  await page.getByLabel('Passcode').fill('birch-31');
  await page.getByRole('button', { name: 'Open the gallery' }).click();
  await expect(page.getByRole('heading', { level: 1, name: shoot.title })).toBeVisible();
  const tally = page.getByTestId('pick-tally');
  await expect(tally).toContainText('0 picked of 3 included');
  await expect(page.getByRole('list', { name: 'Proofs' }).getByRole('listitem')).toHaveCount(5);
  await expectNoSeriousViolations(page, 'gallery');

  // Open the first proof; the pick toggle has focus. Pick it with the keyboard and write a note.
  await page.getByRole('button', { name: /^View NL_0001\.jpg, 1 of 5/ }).click();
  const viewer = page.getByRole('dialog');
  await expect(viewer).toBeVisible();
  await expect(viewer.getByTestId('viewer-counter')).toHaveText('1 of 5');
  const toggle = viewer.getByRole('button', { name: /^Pick NL_/ });
  await expect(toggle).toBeFocused();
  await page.keyboard.press('Space');
  await expect(toggle).toHaveAttribute('aria-pressed', 'true');
  await viewer.getByLabel('Note for the retoucher').fill('Soften the flyaways <please> & keep the freckles');
  await expectNoSeriousViolations(page, 'viewer');
  // Back to the toggle, then arrows move between frames (they do nothing inside the note).
  await page.keyboard.press('Shift+Tab');
  await expect(toggle).toBeFocused();
  await expect(viewer.getByText('Saved', { exact: true })).toBeVisible();
  await page.keyboard.press('ArrowRight');
  await expect(viewer.getByTestId('viewer-counter')).toHaveText('2 of 5');
  await expect(toggle).toHaveAttribute('aria-pressed', 'false');
  await page.keyboard.press('Enter');
  await expect(toggle).toHaveAttribute('aria-pressed', 'true');
  if (phone) {
    await swipe(viewer.getByRole('img'), 300, 80);
  } else {
    await page.keyboard.press('ArrowRight');
  }
  await expect(viewer.getByTestId('viewer-counter')).toHaveText('3 of 5');
  await page.keyboard.press('ArrowLeft');
  await expect(viewer.getByTestId('viewer-counter')).toHaveText('2 of 5');
  await page.keyboard.press('ArrowRight');
  await page.keyboard.press('ArrowRight');
  await expect(viewer.getByTestId('viewer-counter')).toHaveText('4 of 5');
  // Tab stays inside the dialog.
  for (let i = 0; i < 6; i++) {
    await page.keyboard.press('Tab');
    expect(await viewer.evaluate((d) => d.contains(document.activeElement))).toBe(true);
  }
  await page.keyboard.press('Escape');
  await expect(viewer).toBeHidden();
  // Focus comes back to the frame last shown.
  await expect(page.getByRole('button', { name: /^View NL_0004\.jpg/ })).toBeFocused();
  await expect(tally).toContainText('2 picked of 3 included');
  await expect(tally).toContainText('1 more is included at no extra cost');

  // Only my picks.
  await page.getByRole('button', { name: /Only my picks/ }).click();
  await expect(page.getByRole('list', { name: 'Your picks' }).getByRole('listitem')).toHaveCount(2);
  await page.getByRole('button', { name: /Only my picks/ }).click();

  // Compare frame 2 (picked) with frame 5 and keep frame 5.
  await page.getByRole('button', { name: 'Compare two' }).click();
  await page.getByRole('button', { name: 'Choose NL_0002.jpg to compare' }).click();
  await page.getByRole('button', { name: 'Choose NL_0005.jpg to compare' }).click();
  await page.getByRole('button', { name: 'Compare', exact: true }).click();
  const compare = page.getByRole('dialog', { name: 'Compare two frames' });
  await expect(compare.getByRole('img')).toHaveCount(2);
  await compare.getByRole('figure', { name: /NL_0005\.jpg/ }).getByRole('button', { name: 'Pick this one' }).click();
  await expect(compare).toBeHidden();
  await expect(page.getByRole('button', { name: 'Pick NL_0005.jpg' })).toHaveAttribute('aria-pressed', 'true');
  await expect(page.getByRole('button', { name: 'Pick NL_0002.jpg' })).toHaveAttribute('aria-pressed', 'false');
  await expect(tally).toContainText('2 picked of 3 included');

  // What the browser shows is what the studio has.
  await expect.poll(async () => (await db()('picks as k').join('frames as f', 'f.id', 'k.frame_id').where('k.shoot_id', shoot.id).orderBy('f.original_name').pluck('f.original_name')))
    .toEqual(['NL_0001.jpg', 'NL_0005.jpg']);
  await page.reload();
  await hydrated(page);
  await expect(page.getByRole('button', { name: 'Pick NL_0001.jpg' })).toHaveAttribute('aria-pressed', 'true');
  await expect(page.getByRole('button', { name: 'Pick NL_0005.jpg' })).toHaveAttribute('aria-pressed', 'true');

  // Review and send.
  await page.getByRole('link', { name: 'Review & send' }).click();
  await expect(page.getByRole('heading', { name: 'Check your picks' })).toBeVisible();
  await expect(page.getByTestId('review-picked')).toHaveText('2');
  await expect(page.getByTestId('review-extras')).toHaveText('0');
  await expect(page.getByTestId('review-note')).toHaveText('Soften the flyaways <please> & keep the freckles');
  await expectNoSeriousViolations(page, 'review');
  await page.getByRole('button', { name: 'Send my 2 picks to Harbour Light Studio' }).click();
  await expect(page.getByRole('status').filter({ hasText: 'Thank you!' })).toBeVisible();

  // The studio hears of it, with the note as text.
  const notice = await waitForMail(studio.owner.email, new RegExp(`^Picks in: “${shoot.title}” \\(2\\)`));
  expect(notice.text).toContain('NL_0001.jpg\n    Note: Soften the flyaways <please> & keep the freckles');
  expect(notice.html).toContain('Soften the flyaways &lt;please&gt; &amp; keep the freckles');
  expect((await db()('shoots').where({ id: shoot.id }).first('stage')).stage).toBe('picks_in');

  // The gallery now says the picks went; the toggles are gone.
  await page.goto(`/gallery/${shoot.id}`);
  await expect(page.getByRole('status').filter({ hasText: 'Your picks were sent' })).toBeVisible();
  await expect(page.getByRole('button', { name: /^Pick NL_/ })).toHaveCount(0);

  // The owner's tab lists the picks with the note, and can reopen them.
  await owner.reload();
  await hydrated(owner);
  await expect(owner.getByTestId('picks-count')).toContainText('2 picked');
  await expect(owner.getByTestId('pick-note')).toHaveText('Soften the flyaways <please> & keep the freckles');
  await owner.getByRole('button', { name: 'Reopen picks' }).click();
  await expect(owner.getByRole('status').filter({ hasText: 'Picks are open again' })).toBeVisible();
  await page.reload();
  await expect(page.getByRole('button', { name: 'Pick NL_0003.jpg' })).toBeVisible();
  await ownerContext.close();
});
