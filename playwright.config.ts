import { defineConfig, devices } from '@playwright/test'

// Debian's Chromium: Playwright's own browser downloads are not available on these machines.
const launchOptions = {
  executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
  args: ['--disable-gpu', '--disable-dev-shm-usage', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
}

export default defineConfig({
  testDir: 'tests/e2e',
  fullyParallel: false,
  workers: 1,
  retries: 0,
  timeout: 60_000,
  expect: { timeout: 10_000 },
  forbidOnly: !!process.env.CI,
  reporter: process.env.PLAYWRIGHT_JSON ? [['list'], ['json', { outputFile: process.env.PLAYWRIGHT_JSON }]] : [['list']],
  globalSetup: './tests/e2e/global-setup.ts',
  use: {
    trace: 'retain-on-failure',
    screenshot: 'only-on-failure',
    launchOptions,
  },
  projects: [
    { name: 'desktop', use: { ...devices['Desktop Chrome'], browserName: 'chromium', launchOptions } },
    // Stakeholders use phones: a phone-sized Chromium (device descriptors default to WebKit).
    { name: 'phone', use: { ...devices['Pixel 7'], browserName: 'chromium', launchOptions } },
  ],
})
