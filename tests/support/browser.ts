/** Steps many end-to-end tests share. */
import { expect, type Page, type Locator } from '@playwright/test';
import AxeBuilder from '@axe-core/playwright';
import { PASSWORD } from './factories';

export async function signIn(page: Page, email: string, password = PASSWORD) {
  await page.goto('/signin');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page).toHaveURL(/\/desk/);
  // The desk is an island: clicks before it hydrates would do nothing.
  await hydrated(page);
}

/** Islands answer clicks only once hydrated; Astro drops an island's `ssr` attribute when it is. */
export async function hydrated(scope: Page | Locator) {
  await expect(scope.locator('astro-island[ssr]')).toHaveCount(0);
}

/** axe-core (WCAG 2.x A/AA rules) finds nothing serious or critical on the page as it stands. */
export async function expectNoSeriousViolations(page: Page, label: string) {
  const result = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  const bad = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  expect(bad.map((v) => `${label}: ${v.id} — ${v.help} (${v.nodes.map((n) => n.target.join(' ')).slice(0, 3).join(', ')})`)).toEqual([]);
}
