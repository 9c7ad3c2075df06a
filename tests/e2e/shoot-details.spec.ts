/** The Details tab in a real browser: an owner reopens closed proofs and changes the allowance. */
import { test, expect } from '@playwright/test';
import { makeStudio, makeShoot } from '../support/factories';
import { db } from '../../src/lib/server/db';
import { signIn, hydrated } from '../support/browser';

const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);

test('an owner moves the proof expiry and changes the allowance from the Details tab, with the keyboard @phone', async ({ page }) => {
  const studio = await makeStudio('DetailsForm');
  const { shoot } = await makeShoot(studio.studioId, { allowance: 3 });
  await db()('shoots').where({ id: shoot.id }).update({ proof_expires_at: new Date(Date.now() - 2 * 86_400_000) });
  await signIn(page, studio.owner.email);

  await page.goto(`/desk/shoots/${shoot.id}/client`);
  await page.getByRole('link', { name: 'Move the date' }).click();
  await expect(page).toHaveURL(`/desk/shoots/${shoot.id}/details`);
  await expect(page.getByRole('navigation', { name: 'Shoot sections' }).getByRole('link', { name: 'Details' })).toHaveAttribute('aria-current', 'page');
  await hydrated(page);
  await expect(page.getByTestId('proofs-closed')).toContainText('The proofs closed on');

  await page.getByLabel('Proofs close after').fill(day(10));
  const allowance = page.getByLabel('Retouches included');
  await allowance.fill('6');
  // Enter in a field sends the form, as in any form.
  await allowance.press('Enter');
  await expect(page.getByTestId('details-status')).toHaveText('Saved: proof expiry date, retouches included.');
  // The shoot's header above the tabs agrees at once.
  await expect(page.getByText('6 retouches included')).toBeVisible();
  await hydrated(page);

  const row = await db()('shoots').where({ id: shoot.id }).first('allowance', 'proof_expires_at');
  expect(row.allowance).toBe(6);
  expect(new Date(row.proof_expires_at).toISOString()).toBe(`${day(10)}T23:59:59.000Z`);

  // A mistake is shown on its field and nothing is sent.
  await allowance.fill('two');
  await page.getByRole('button', { name: 'Save details' }).click();
  await expect(page.getByText('Enter a whole number.')).toBeVisible();
  await expect(allowance).toHaveAttribute('aria-invalid', 'true');
  expect((await db()('shoots').where({ id: shoot.id }).first('allowance')).allowance).toBe(6);
});
