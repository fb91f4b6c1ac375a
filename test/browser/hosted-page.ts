/** A hosted server (native engine behind a token-protected socket) for the tests of the enclosing describe block. */
import { expect, test, type Page } from '@playwright/test';
import { newToken } from '../../scripts/web/access.ts';
import { createHostedServer, type HostedServer } from '../../scripts/web/hosted-server.ts';
import { PAGE_ORIGIN } from './page-origin.ts';

/** `origin()` is the page's origin, the only one the socket answers (default: the dev server's). */
export function hostedPage(logFolders: string[], origin: () => string = () => PAGE_ORIGIN): { open(page: Page): Promise<void> } {
  let server: HostedServer | undefined;
  let token = '';
  test.beforeAll(async () => {
    token = newToken();
    server = await createHostedServer({ port: 0, token, origin: origin(), logFolders });
  });
  test.afterAll(async () => server?.close());
  return {
    async open(page) {
      await page.goto(`${origin()}/#host=${encodeURIComponent(server!.socketUrl)}&token=${token}`);
      await expect(page.getByText('Engine: native DuckDB on this computer')).toBeVisible();
    },
  };
}

export type WebMode = 'standalone' | 'hosted';

interface BothModes {
  readonly timeoutMs: number;
  /** where hosted mode finds a log picked by its name */
  readonly logFolders: string[];
  readonly origin?: () => string;
  /** runs before the page is opened (an init script) */
  readonly beforeOpen?: (page: Page) => Promise<void>;
}

/**
 * One test in both web modes: standalone (the page alone, DuckDB-Wasm) and hosted (the native engine behind the
 * page's socket). `run` gets the page opened in that mode.
 */
export function inBothWebModes(title: string, options: BothModes, run: (page: Page, mode: WebMode) => Promise<void>): void {
  const { timeoutMs, logFolders, origin = () => PAGE_ORIGIN, beforeOpen } = options;
  test(`standalone web mode: ${title}`, async ({ page }) => {
    test.setTimeout(timeoutMs);
    await beforeOpen?.(page);
    await page.goto(`${origin()}/`);
    await run(page, 'standalone');
  });
  test.describe('hosted web mode', () => {
    const hosted = hostedPage(logFolders, origin);
    test(title, async ({ page }) => {
      test.setTimeout(timeoutMs);
      await beforeOpen?.(page);
      await hosted.open(page);
      await run(page, 'hosted');
    });
  });
}
