/**
 * Takes headless Chromium screenshots of pages at phone and desktop widths, to look at them.
 * Usage (with the test stack up: `npm test -- --serve`): tsx scripts/screens.ts <out-dir> <email> <password> <path>…
 * Paths starting with "client:" are opened without signing in (e.g. a viewing link).
 */
import { chromium } from '@playwright/test';
import { mkdirSync } from 'node:fs';
import path from 'node:path';

const [out, email, password, ...paths] = process.argv.slice(2);
const base = process.env.PUBLIC_ORIGIN ?? 'http://127.0.0.1:4331';
mkdirSync(out, { recursive: true });
const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking'] });
for (const [label, viewport] of [['phone', { width: 390, height: 844 }], ['desktop', { width: 1280, height: 860 }]] as const) {
  const ctx = await browser.newContext({ viewport, deviceScaleFactor: 1 });
  const page = await ctx.newPage();
  if (email && email !== '-') {
    await page.goto(base + '/signin');
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForLoadState('networkidle');
  }
  for (const p of paths) {
    const url = p.startsWith('http') ? p : base + p;
    await page.goto(url);
    await page.waitForLoadState('networkidle');
    const name = `${label}-${p.replace(/^https?:\/\/[^/]+/, '').replace(/[^a-z0-9]+/gi, '_').slice(0, 60) || 'root'}.png`;
    await page.screenshot({ path: path.join(out, name), fullPage: true });
    console.log(path.join(out, name));
  }
  await ctx.close();
}
await browser.close();
