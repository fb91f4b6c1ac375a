import { describe, expect, it } from 'vitest';
import config from '../../../vite.config.ts';

// The production bundle is the app's page only; the engine harness (renderer/engine-harness.html) is a test page
// that the Vite dev server serves to test/browser/engine.spec.ts and bench/browser.ts.
describe('the renderer build', () => {
  it('bundles the app page and not the engine harness', () => {
    const input = config.build?.rollupOptions?.input;
    const pages = typeof input === 'string' ? [input] : Array.isArray(input) ? input : Object.values(input ?? {});
    expect(pages.map((page) => page.split(/[\\/]/).pop())).toEqual(['index.html']);
  });
});
