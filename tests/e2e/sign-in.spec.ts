import { test, expect } from '@playwright/test';
import { randomUUID } from 'node:crypto';
import { waitForMail, firstLink } from '../support/mail';
import { makeStudio, makeShoot, PASSWORD } from '../support/factories';
import { hydrated } from '../support/browser';
import { db } from '../../src/lib/server/db';

test('a photographer signs up, signs out and signs in again @phone', async ({ page }) => {
  const email = `ada-${randomUUID().slice(0, 6)}@example.test`;
  await page.goto('/');
  await expect(page.getByRole('heading', { level: 1 })).toContainText('Proofs out, picks in');
  await page.getByRole('link', { name: 'Start your studio' }).click();
  await page.getByLabel('Studio name').fill('Lantern Yard Portraits');
  await page.getByLabel('Your name').fill('Wren Okafor-Lind');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill('a long enough password');
  await page.getByRole('button', { name: 'Create studio' }).click();
  await expect(page).toHaveURL(/\/desk/);
  await expect(page.getByRole('heading', { name: 'No shoots yet' })).toBeVisible();

  await page.getByRole('button', { name: 'Sign out' }).click();
  await expect(page).toHaveURL(/\/signin/);
  await page.goto('/desk');
  await expect(page).toHaveURL(/\/signin\?next=%2Fdesk/);

  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill('wrong password!!');
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('alert')).toContainText('do not match');
  await page.getByLabel('Password').fill('a long enough password');
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page).toHaveURL(/\/desk$/);
  await expect(page.getByRole('heading', { name: 'Shoots', exact: true })).toBeVisible();
});

test('an owner invites a retoucher, who accepts from the e-mail', async ({ page, browser }) => {
  const studio = await makeStudio('Invite');
  await page.goto('/signin');
  await page.getByLabel('E-mail').fill(studio.owner.email);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('link', { name: 'Team' }).click();
  const invitee = `new-retoucher-${randomUUID().slice(0, 6)}@example.test`;
  await page.getByLabel('E-mail').fill(invitee);
  await page.getByRole('button', { name: 'Send invitation' }).click();
  await expect(page.getByRole('status')).toContainText(`Invitation sent to ${invitee}`);

  const mail = await waitForMail(invitee, /invited/);
  const link = firstLink(mail, /http:\/\/[^\s"<]+\/invite\/[A-Za-z0-9_-]+/);
  const other = await browser.newContext();
  const p2 = await other.newPage();
  await p2.goto(link);
  await hydrated(p2);
  await p2.getByLabel('Your name').fill('Sol Marrow');
  await p2.getByLabel('Choose a password').fill('retouch all day 42');
  await p2.getByRole('button', { name: 'Join the studio' }).click();
  await expect(p2).toHaveURL(/\/desk/);
  // A retoucher has no Team or Settings pages.
  await expect(p2.getByRole('link', { name: 'Team' })).toHaveCount(0);
  await p2.goto('/desk/team');
  await expect(p2.getByRole('heading', { name: 'Not for your role' })).toBeVisible();
  // The link works once.
  await p2.goto(link);
  await expect(p2.getByRole('heading', { name: 'This invitation has closed' })).toBeVisible();
  await other.close();
});

test('a client enters by viewing link and passcode; wrong passcode and expired link are refused clearly @phone', async ({ page }) => {
  const studio = await makeStudio('Gallery');
  const { shoot, token } = await makeShoot(studio.studioId, { passcode: 'lantern7' });
  await page.goto(`/g/${token}`);
  await hydrated(page);
  await expect(page).toHaveURL(new RegExp(`/gallery/${shoot.id}/passcode$`));
  await page.getByLabel('Passcode').fill('nope');
  await page.getByRole('button', { name: 'Open the gallery' }).click();
  await expect(page.getByRole('alert')).toContainText('passcode is not right');
  await page.getByLabel('Passcode').fill('lantern7');
  await page.getByRole('button', { name: 'Open the gallery' }).click();
  await expect(page).toHaveURL(new RegExp(`/gallery/${shoot.id}$`));
  await expect(page.getByRole('heading', { name: shoot.title })).toBeVisible();

  // The studio lets the proofs expire: the same session now sees a friendly closed page with the contact.
  await db()('shoots').where({ id: shoot.id }).update({ proof_expires_at: new Date(Date.now() - 1000) });
  await page.reload();
  await expect(page.getByRole('heading', { name: 'This gallery has closed' })).toBeVisible();
  await expect(page.getByText(/studio-.*@example.test/)).toBeVisible();
  await page.goto(`/g/${token}`);
  await expect(page.getByRole('heading', { name: 'This gallery has closed' })).toBeVisible();
  await page.goto('/g/not-a-real-link-token-at-all');
  await expect(page.getByRole('heading', { name: 'This link does not open a gallery' })).toBeVisible();
});
