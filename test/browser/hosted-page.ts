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
