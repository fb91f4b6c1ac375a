import { defineConfig } from '@playwright/test';

import { PAGE_PORT as PORT } from './test/browser/page-origin.ts';

export default defineConfig({
  testDir: 'test/browser',
  outputDir: 'test-results',
  timeout: 60_000,
  fullyParallel: false,
  workers: 1,
  use: { baseURL: `http://127.0.0.1:${PORT}` },
  projects: [
    {
      name: 'chromium',
      use: {
        browserName: 'chromium',
        // Debian's Chromium; Playwright's own browser downloads are not available here.
        launchOptions: {
          executablePath: '/usr/bin/chromium',
          args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
        },
      },
    },
  ],
  webServer: {
    command: `CW_NO_HMR=1 npx vite --host 127.0.0.1 --port ${PORT} --strictPort`,
    url: `http://127.0.0.1:${PORT}/engine-harness.html`,
    reuseExistingServer: !process.env.CI,
    timeout: 60_000,
  },
});
