import { join } from 'node:path';
import { defineConfig } from '@playwright/test';

const port = Number(process.env.TEST_APP_PORT ?? 4331);
/**
 * The browser's environment. Under `npm test`'s fixed instants the whole stack runs on libfaketime's
 * clock; Chromium hangs waiting for page loads when its monotonic clock is left real while its wall
 * clock is moved, so it takes the fake clock whole (the other processes keep a real monotonic clock).
 */
const { FAKETIME_DONT_FAKE_MONOTONIC: _keptForOthers, ...browserEnv } = process.env;
const outDir = process.env.TALLYWOOD_OUT_DIR ?? join(import.meta.dirname, '..', '.local', 'test-dist');

export default defineConfig({
  testDir: './e2e',
  outputDir: '../.local/test-results',
  workers: 1,
  fullyParallel: false,
  forbidOnly: !!process.env.CI,
  reporter: [['list']],
  timeout: 30_000,
  expect: { timeout: 10_000 },
  use: {
    baseURL: `http://127.0.0.1:${port}`,
    trace: 'retain-on-failure',
    screenshot: 'only-on-failure',
    launchOptions: {
      /** Debian's Chromium: Playwright's own browser download cannot work on this network. */
      executablePath: '/usr/bin/chromium',
      args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
      env: browserEnv as Record<string, string>,
    },
  },
  projects: [
    { name: 'sessions', testMatch: /auth\.setup\.ts$/ },
    { name: 'chromium', use: { browserName: 'chromium' }, dependencies: ['sessions'] },
  ],
  webServer: {
    /** Served as in production (scripts/serve.mjs), in local mode: mail to the local catcher, payments to the local fake. */
    command: `node ${join(import.meta.dirname, '..', 'scripts', 'serve.mjs')}`,
    url: `http://127.0.0.1:${port}/api/health`,
    env: { ...(process.env as Record<string, string>), HOST: '127.0.0.1', PORT: String(port), TALLYWOOD_OUT_DIR: outDir, TALLYWOOD_LOCAL_MODE: 'true' },
    reuseExistingServer: false,
    timeout: 60_000,
    stdout: 'ignore',
    stderr: 'pipe',
  },
});
