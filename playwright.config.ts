import { defineConfig, devices } from '@playwright/test';

// Debian's Chromium, never a downloaded browser. The app is started by scripts/test.ts.
const chromiumArgs = ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

export default defineConfig({
  testDir: 'tests/e2e',
  outputDir: `${process.env.FILLCARD_ARTIFACTS ?? 'tests/.artifacts'}/playwright`,
  timeout: 120_000,
  expect: { timeout: 15_000 },
  workers: 1,
  // One retry on CI, where a slow 2-core machine can stall a browser; the list still names any
  // test that passed only on its retry as flaky.
  retries: process.env.CI ? 1 : 0,
  reporter: [['list']],
  use: {
    baseURL: process.env.PUBLIC_ORIGIN ?? 'http://127.0.0.1:4331',
    launchOptions: { executablePath: '/usr/bin/chromium', args: chromiumArgs },
    screenshot: 'only-on-failure',
    trace: 'off',
  },
  projects: [
    { name: 'desktop', use: { ...devices['Desktop Chrome'], viewport: { width: 1280, height: 860 }, channel: undefined } },
    { name: 'phone', use: { viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true, deviceScaleFactor: 2 }, grep: /@phone/ },
  ],
});
