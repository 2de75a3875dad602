/**
 * The built report in a real browser: Debian's Chromium driven by
 * playwright-core, the site served over HTTP on 127.0.0.1 under its base path.
 * Each release overview and one rung page must load with no console error, no
 * failed request and no request outside the site; axe-core must find no
 * serious or critical accessibility violation. Screenshots (laptop, phone and
 * print) go to tests/artifacts/ for review.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BASE, buildFixture, FIXTURE_IDS } from '../report/fixtureBuild.ts';
import { ARTIFACTS, expectClean, LAPTOP, openInChromium, PHONE, type SiteInBrowser } from './visit.ts';

const BUILD_TIMEOUT_MS = 300_000;
const PAGE_TIMEOUT_MS = 120_000;

let site: SiteInBrowser;

beforeAll(async () => {
  site = await openInChromium(await buildFixture(), BASE);
}, BUILD_TIMEOUT_MS);

afterAll(async () => {
  await site?.close();
});

describe('report in Chromium', () => {
  for (const id of FIXTURE_IDS) {
    it(
      `release ${id} overview loads cleanly and passes axe`,
      async () => {
        expectClean(await site.visit(`releases/${id}/`, `overview-${id}`));
      },
      PAGE_TIMEOUT_MS,
    );
  }

  it(
    'a rung page (Cepheids of the dense release) loads cleanly and passes axe',
    async () => {
      expectClean(await site.visit('releases/2026.1/cepheids/', 'rung-2026.1-cepheids'));
    },
    PAGE_TIMEOUT_MS,
  );

  it(
    'a figure page and the home page load cleanly and pass axe',
    async () => {
      expectClean(await site.visit('releases/2026.2/figures/variants/', 'figure-2026.2-variants'));
      expectClean(await site.visit('', 'home'));
    },
    PAGE_TIMEOUT_MS,
  );

  it(
    'fits a phone screen without sideways scrolling of the page',
    async () => {
      const v = await site.visit('releases/2026.1/', 'overview-2026.1-phone', PHONE);
      expectClean(v);
      expect(v.overflowPx).toBeLessThanOrEqual(0);
    },
    PAGE_TIMEOUT_MS,
  );

  it(
    'prints a rung page without the navigation',
    async () => {
      const context = await site.browser.newContext({ viewport: LAPTOP });
      const page = await context.newPage();
      await page.goto(`${site.server.url}releases/2026.1/parallax/`);
      await page.emulateMedia({ media: 'print' });
      expect(await page.locator('.release-nav').isVisible()).toBe(false);
      expect(await page.locator('.notice').isVisible()).toBe(true);
      expect(await page.locator('aside.cautions').isVisible()).toBe(true);
      await page.screenshot({ path: join(ARTIFACTS, 'print-2026.1-parallax.png'), fullPage: true });
      const pdf = await page.pdf({ format: 'A4' });
      expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
      await context.close();
    },
    PAGE_TIMEOUT_MS,
  );
});
