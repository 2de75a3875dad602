/**
 * The demo report's comparison pages in Chromium: they load with no console error, failed or
 * outside request, pass axe-core (no serious or critical violation), fit a phone screen, and the
 * copy button puts exactly the message shown on the page on the clipboard.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BASE, buildDemo, DEMO_BUILD_TIMEOUT_MS } from '../report/demoBuild.ts';
import { expectClean, LAPTOP, openInChromium, PHONE, type SiteInBrowser } from './visit.ts';

const PAGE_TIMEOUT_MS = 120_000;

let site: SiteInBrowser;

beforeAll(async () => {
  site = await openInChromium(await buildDemo(), BASE);
}, DEMO_BUILD_TIMEOUT_MS);

afterAll(async () => {
  await site?.close();
});

describe('comparison pages in Chromium', () => {
  it(
    '2026.2 -> 2026.3 and the blinded 2026.3 -> 2026.4 load cleanly and pass axe with no finding at all',
    async () => {
      for (const id of ['2026.3', '2026.4']) {
        const v = await site.visit(`releases/${id}/compare/`, `compare-${id}`);
        expectClean(v);
        expect(v.all).toEqual([]);
      }
    },
    PAGE_TIMEOUT_MS,
  );

  it(
    'fits a phone screen without sideways scrolling of the page',
    async () => {
      const v = await site.visit('releases/2026.3/compare/', 'compare-2026.3-phone', PHONE);
      expectClean(v);
      expect(v.all).toEqual([]);
      expect(v.overflowPx).toBeLessThanOrEqual(0);
    },
    PAGE_TIMEOUT_MS,
  );

  it(
    'copies the message to paste with one click',
    async () => {
      const context = await site.browser.newContext({ viewport: LAPTOP, permissions: ['clipboard-read', 'clipboard-write'] });
      const page = await context.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(String(e)));
      await page.goto(`${site.server.url}releases/2026.3/compare/`);
      const button = page.getByRole('button', { name: 'Copy the message' });
      expect(await button.isVisible()).toBe(true);
      await button.click();
      await expect.poll(() => page.locator('.copy-status').textContent()).toMatch(/copied/i);
      const clipboard = await page.evaluate(() => navigator.clipboard.readText());
      expect(clipboard).toBe(await page.locator('#paste-message').textContent());
      expect(clipboard).toMatch(/^\*\*|^#|H0/m);
      expect(errors).toEqual([]);
      await context.close();
    },
    PAGE_TIMEOUT_MS,
  );
});
