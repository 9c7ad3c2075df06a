/**
 * Buying extra retouches in a real browser: the client picks three frames beyond the allowance,
 * sends them, pays on the payment stand-in's test page, comes back, waits while the payment is
 * confirmed, and sees it paid once the signed webhook has been handled. Then the studio owner sees
 * the order on the shoot's Client & picks tab and refunds it; a retoucher sees no money at all.
 */
import { test, expect, type Locator, type Page } from '@playwright/test';
import { randomUUID } from 'node:crypto';
import sharp from 'sharp';
import { makeStudio, makeShoot, PASSWORD } from '../support/factories';
import { waitForMail } from '../support/mail';
import { PAYMENTS } from '../support/env';
import { db } from '../../src/lib/server/db';
import { keys, putObject } from '../../src/lib/server/storage';
import { signIn, hydrated } from '../support/browser';

/** Frames ready for the gallery: small real JPEGs for thumbnail and proof in the object store. */
async function readyFrames(studioId: string, shootId: string, count: number) {
  for (let i = 1; i <= count; i++) {
    const [frame] = await db()('frames').insert({
      studio_id: studioId, shoot_id: shootId, object_key: keys.original(studioId, shootId, 'jpg'),
      original_name: `SITTING_${String(i).padStart(3, '0')}.jpg`, bytes: 100_000, state: 'ready', width: 1200, height: 1500,
      taken_at: new Date(Date.UTC(2026, 2, 14, 10, i)),
    }).returning('id');
    for (const [kind, width, height] of [['thumb', 320, 400], ['proof', 800, 1000]] as const) {
      const body = await sharp({ create: { width, height, channels: 3, background: { r: 60 + i * 20, g: 90, b: 120 } } }).jpeg({ quality: 70 }).toBuffer();
      const key = keys.variant(studioId, shootId, randomUUID().replaceAll('-', ''), 'jpg');
      await putObject(key, body, 'image/jpeg');
      await db()('frame_variants').insert({ studio_id: studioId, frame_id: frame.id, kind, object_key: key, width, height, bytes: body.length });
    }
  }
}

test('a client pays for three extra retouches; the studio sees the payment and refunds it', async ({ page, browser }) => {
  const studio = await makeStudio('Checkout');
  // Allowance 2, six frames; €25.00 per extra retouch with 20 % tax added.
  const { shoot, client, token } = await makeShoot(studio.studioId, { allowance: 2, extraPriceMinor: 2500, currency: 'EUR' });
  await db()('shoots').where({ id: shoot.id }).update({ tax_rate_bp: 2000, tax_mode: 'exclusive' });
  await readyFrames(studio.studioId, shoot.id, 6);
  // Worked by hand: 5 picks − 2 included = 3 extras; net 3 × 2500 = 7500 cents; tax 20 % = 1500;
  // total 9000 cents, which ECMA-402 Intl.NumberFormat writes as:
  const total = new Intl.NumberFormat('en-GB', { style: 'currency', currency: 'EUR', minimumFractionDigits: 2 }).format(90);

  // The client picks allowance + 3 frames and sends them.
  await page.goto(`/g/${token}`);
  await expect(page).toHaveURL(new RegExp(`/gallery/${shoot.id}$`));
  await hydrated(page);
  for (let i = 1; i <= 5; i++) {
    const pick = page.getByRole('button', { name: `Pick SITTING_${String(i).padStart(3, '0')}.jpg` });
    await pick.click();
    await expect(pick).toHaveAttribute('aria-pressed', 'true');
  }
  await page.getByRole('link', { name: 'Review & send' }).click();
  await expect(page.getByTestId('review-extras')).toHaveText('3');
  await expect(page.getByTestId('review-total')).toHaveText(total);
  await hydrated(page);
  await page.getByRole('button', { name: `Send my picks and pay ${total}` }).click();

  // Off to the payment stand-in's test page.
  await expect(page).toHaveURL(new RegExp(`^${PAYMENTS}/pay/cs_test_`));
  await expect(page.getByRole('heading', { name: `Pay ${total}` })).toBeVisible();

  // A slow webhook, made real: while this transaction holds the shoot's row, the app cannot settle
  // the order, so the browser comes back before the payment is confirmed (the stand-in gives up
  // waiting for the app's answer after its delivery timeout, then sends the browser back).
  const hold = await db().transaction();
  try {
    await hold('shoots').where({ id: shoot.id }).forUpdate().first('id');
    await page.getByRole('button', { name: `Pay ${total}` }).click();
    await expect(page).toHaveURL(new RegExp(`/gallery/${shoot.id}/payment\\?session=cs_test_`), { timeout: 60_000 });
    await expect(page.getByRole('heading', { name: 'Payment being confirmed' })).toBeVisible();
    expect((await db()('orders').where({ shoot_id: shoot.id }).first('state')).state).toBe('pending');
  } finally {
    await hold.commit();
  }

  // The webhook goes through; the page notices by itself.
  await expect(page.getByRole('heading', { name: 'Paid — your retouches are on their way' })).toBeVisible({ timeout: 30_000 });
  await expect(page.getByTestId('paid-amount')).toHaveText(total);
  const receipt = await waitForMail(client.email, /^Receipt/);
  expect(receipt.subject).toContain(total);
  expect(receipt.text).toContain('Extra retouches: 3 × €25.00');
  expect(receipt.text).toContain('Tax (20 %): €15.00');
  expect(receipt.text).toContain(`Total paid: ${total}`);
  const after = await db()('shoots').where({ id: shoot.id }).first('stage', 'picks_submitted_at');
  expect(after.stage).toBe('retouching');
  expect(after.picks_submitted_at).not.toBeNull();

  // A retoucher of the studio sees the picks but no money.
  const retoucherContext = await browser.newContext();
  const retoucher = await retoucherContext.newPage();
  await signIn(retoucher, studio.retoucher.email);
  await retoucher.goto(`/desk/shoots/${shoot.id}/client`);
  await expect(retoucher.getByRole('heading', { name: 'Picks', exact: true })).toBeVisible();
  await expect(retoucher.getByTestId('orders-panel')).toHaveCount(0);
  await expect(retoucher.locator('main')).not.toContainText('€');
  await retoucherContext.close();

  // The owner sees the order and refunds it after confirming.
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await signIn(owner, studio.owner.email);
  await owner.goto(`/desk/shoots/${shoot.id}/client`);
  const panel = owner.getByTestId('orders-panel');
  await expect(panel).toContainText('Paid');
  await expect(panel).toContainText(total);
  await expect(panel).toContainText('€15.00 (20 %, added)');
  await panel.scrollIntoViewIfNeeded();
  await hydrated(panel);
  await panel.getByRole('button', { name: 'Refund…' }).click();
  await expect(panel.getByText(`Refund ${total} to the client’s card? This cannot be undone.`)).toBeVisible();
  await panel.getByRole('button', { name: `Yes, refund ${total}` }).click();
  await expect(owner.getByTestId('orders-panel').locator('[data-order-state="refunded"]')).toBeVisible();
  await expect(owner.getByTestId('orders-panel')).toContainText(`${total} on`);
  expect((await db()('orders').where({ shoot_id: shoot.id }).first('state')).state).toBe('refunded');
  await waitForMail(client.email, /^Refund/);
  await ownerContext.close();
});
