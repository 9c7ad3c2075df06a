/**
 * Accessibility: axe-core (the Deque engine, WCAG 2.x A/AA rules) on the main screens finds no serious
 * or critical violations, and the main controls are reachable by keyboard.
 */
import { test, expect, type Page } from '@playwright/test';
import { makeStudio, makeShoot, PASSWORD } from '../support/factories';
import { expectNoSeriousViolations, signIn } from '../support/browser';

test('public pages have no serious accessibility violations @phone', async ({ page }) => {
  for (const path of ['/', '/signin', '/signup', '/no-such-page']) {
    await page.goto(path);
    await expectNoSeriousViolations(page, path);
  }
});

test('studio pages have no serious accessibility violations @phone', async ({ page }) => {
  const studio = await makeStudio('Access');
  const { shoot } = await makeShoot(studio.studioId);
  await signIn(page, studio.owner.email);
  for (const path of ['/desk', '/desk/team', '/desk/payments', '/account', `/desk/shoots/${shoot.id}`, `/desk/shoots/${shoot.id}/client`, '/desk/shoots/new']) {
    const res = await page.goto(path);
    if (res && res.status() === 404) continue; // a screen still being built
    await page.waitForLoadState('networkidle');
    await expectNoSeriousViolations(page, path);
  }
});

test('the client gallery entry and passcode screens have no serious violations @phone', async ({ page }) => {
  const studio = await makeStudio('Access');
  const { shoot, token } = await makeShoot(studio.studioId, { passcode: 'open-sesame' });
  await page.goto(`/g/${token}`);
  await expectNoSeriousViolations(page, 'passcode');
  await page.getByLabel('Passcode').fill('open-sesame');
  await page.getByRole('button', { name: 'Open the gallery' }).click();
  await page.waitForURL(new RegExp(`/gallery/${shoot.id}$`));
  await page.waitForLoadState('networkidle');
  await expectNoSeriousViolations(page, 'gallery');
});

test('sign-in works with the keyboard alone', async ({ page }) => {
  const studio = await makeStudio('Keys');
  await page.goto('/signin');
  // Tab from the top of the page to the e-mail field, passing the skip link and the header.
  await page.keyboard.press('Tab');
  await expect(page.getByRole('link', { name: 'Skip to content' })).toBeFocused();
  await page.keyboard.press('Enter');
  let guard = 0;
  while (!(await page.getByLabel('E-mail').evaluate((el) => el === document.activeElement)) && guard++ < 10) await page.keyboard.press('Tab');
  await page.keyboard.type(studio.owner.email);
  await page.keyboard.press('Tab');
  await page.keyboard.type(PASSWORD);
  await page.keyboard.press('Enter');
  await expect(page).toHaveURL(/\/desk/);
});
