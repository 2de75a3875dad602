/**
 * The drill-down pages of the demo report in Chromium: the systems index, a system page (plain
 * and blinded release) and the history page load with no console error, failed or outside
 * request and no axe-core finding at laptop and phone width; hovering and focusing a point of a
 * figure shows the object that point draws (checked against the figure's CSV, read from the
 * built files), and clicking it opens its row on its system's page. Screenshots (1280 px, as the
 * layout was reviewed, and phone width) are saved in tests/artifacts/ for review.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BASE, buildDemo, DEMO_BUILD_TIMEOUT_MS } from '../report/demoBuild.ts';
import { ARTIFACTS, expectClean, openInChromium, PHONE, type SiteInBrowser } from './visit.ts';

const PAGE_TIMEOUT_MS = 180_000;
/** The width at which the layout fixes of the drill-down were checked. */
const WIDE = { width: 1280, height: 900 };

let site: SiteInBrowser;
let dist: string;

beforeAll(async () => {
  const built = await buildDemo();
  dist = built.dist;
  site = await openInChromium(built, BASE);
}, DEMO_BUILD_TIMEOUT_MS);

afterAll(async () => {
  await site?.close();
});

/** A figure's CSV as the build wrote it: rows of column -> text (demo values hold no quotes or commas). */
function figureCsv(rel: string): Record<string, string>[] {
  const [head, ...lines] = readFileSync(join(dist, rel), 'utf8').trim().split('\n');
  const cols = head!.split(',');
  return lines.map((l) => Object.fromEntries(l.split(',').map((v, k) => [cols[k]!, v])));
}

describe('drill-down pages in Chromium', () => {
  const pages = [
    ['releases/2026.3/systems/', 'systems-2026.3'],
    ['releases/2026.3/systems/Lindenmarsh/', 'system-Lindenmarsh-2026.3'],
    ['releases/2026.4/systems/Lindenmarsh/', 'system-Lindenmarsh-2026.4-blinded'],
    ['releases/2026.3/', 'overview-2026.3'],
    ['releases/2026.3/compare/', 'compare-2026.3-1280'],
    ['releases/2026.3/cepheids/', 'cepheids-2026.3-1280'],
    ['history/', 'history'],
  ] as const;

  for (const [path, shot] of pages) {
    it(
      `${path} loads cleanly and passes axe with no finding at all, at 1280 px${shot.includes('1280') || shot.startsWith('overview') ? '' : ' and at phone width'}`,
      async () => {
        const wide = await site.visit(path, shot, WIDE);
        expectClean(wide);
        expect(wide.all, path).toEqual([]);
        expect(wide.overflowPx, path).toBeLessThanOrEqual(0);
        if (shot.includes('1280') || shot.startsWith('overview')) return;
        const phone = await site.visit(path, `${shot}-phone`, PHONE);
        expectClean(phone);
        expect(phone.all, path).toEqual([]);
        expect(phone.overflowPx, path).toBeLessThanOrEqual(0);
      },
      PAGE_TIMEOUT_MS,
    );
  }

  it(
    'keeps wide tables out from beside the caution box at 1280 px (nothing cut off)',
    async () => {
      const context = await site.browser.newContext({ viewport: WIDE });
      const page = await context.newPage();
      for (const path of ['releases/2026.3/cepheids/', 'releases/2026.3/global-fit/', 'releases/2026.3/systems/Lindenmarsh/']) {
        await page.goto(`${site.server.url}${path}`);
        const boxes = await page.evaluate(() => {
          const caution = document.querySelector('.results-with-cautions > .cautions')?.getBoundingClientRect();
          return {
            caution: caution ? { top: caution.top + scrollY, bottom: caution.bottom + scrollY, left: caution.left } : null,
            tables: Array.from(document.querySelectorAll('main .table-scroll')).map((t) => {
              const r = t.getBoundingClientRect();
              return { top: r.top + scrollY, right: r.right, scroll: t.scrollWidth - t.clientWidth };
            }),
          };
        });
        expect(boxes.caution, path).not.toBeNull();
        for (const t of boxes.tables) {
          // Either below the box, or not reaching under it.
          expect(t.top >= boxes.caution!.bottom - 1 || t.right <= boxes.caution!.left + 1, `${path}: table beside the caution box`).toBe(true);
        }
      }
      await context.close();
    },
    PAGE_TIMEOUT_MS,
  );
});

describe('figures you can hover', () => {
  it(
    'show the object a point draws on hover and on keyboard focus, and open its row on click',
    async () => {
      const csv = figureCsv('releases/2026.3/figures/pl-residuals.csv');
      const context = await site.browser.newContext({ viewport: WIDE });
      const page = await context.newPage();
      const errors: string[] = [];
      page.on('pageerror', (e) => errors.push(String(e)));
      await page.goto(`${site.server.url}releases/2026.3/cepheids/`);
      const box = page.locator('#figure-pl-residuals .figure-image');
      await expect.poll(() => box.getAttribute('tabindex')).toBe('0');

      // Hover: a rejected point (a cross) when the release has one, and an ordinary one; the tip names
      // the Cepheid of that CSV row. (Since probable blends are down-weighted rather than clipped, the
      // demo may have no rejected Cepheid: then no cross is drawn, which is checked too.)
      const rejectedRows = csv.filter((r) => r.rejected === 'True').length;
      expect(await box.locator('.hover-points path[data-row]').count()).toBe(rejectedRows);
      for (const selector of [...(rejectedRows > 0 ? ['.hover-points path[data-row]'] : []), '.hover-points circle[data-row]']) {
        const point = box.locator(selector).first();
        const row = csv[Number(await point.getAttribute('data-row'))]!;
        await point.hover({ force: true });
        const tip = box.locator('.hover-tip');
        await expect.poll(() => tip.isVisible()).toBe(true);
        const text = (await tip.textContent()) ?? '';
        expect(text).toContain(row.star);
        expect(text).toContain(`system: ${row.system}`);
        expect(text).toContain(`line: ${row.line}`);
      }

      // Keyboard: focus shows the point leftmost on the period axis; the arrow key moves to the next one.
      const byPeriod = [...csv].map((r, i) => ({ i, p: Number(r.log_period) })).sort((a, b) => a.p - b.p);
      await page.mouse.move(0, 0);
      await box.focus();
      const tip = box.locator('.hover-tip');
      await expect.poll(() => tip.isVisible()).toBe(true);
      const first = csv[byPeriod[0]!.i]!;
      expect(await tip.textContent()).toContain(first.star);
      await page.keyboard.press('ArrowRight');
      const second = csv[Number(await box.locator('.hover-active').getAttribute('data-row'))]!;
      expect(Number(second.log_period)).toBeGreaterThanOrEqual(Number(first.log_period));
      expect(await tip.textContent()).toContain(second.star);
      // The tip is announced politely; the static text alternative is still on the page.
      expect(await tip.getAttribute('role')).toBe('status');
      expect(await page.locator('#figure-pl-residuals svg').getAttribute('aria-label')).toBeTruthy();
      expect(await page.locator('#figure-pl-residuals .figure-alt').textContent()).toMatch(/residuals/);

      // Enter opens the object's row on its system's page (demo ids are plain, so the anchor is the id).
      await Promise.all([page.waitForURL(`**/releases/2026.3/systems/${second.system}/#${second.star}`), page.keyboard.press('Enter')]);
      expect(await page.locator(`tr[id="${second.star}"]`).count()).toBe(1);

      // Click on a point opens its page too.
      await page.goto(`${site.server.url}releases/2026.3/cepheids/`);
      await expect.poll(() => box.getAttribute('tabindex')).toBe('0');
      const point = box.locator('.hover-points circle[data-row]').nth(10);
      const row = csv[Number(await point.getAttribute('data-row'))]!;
      await Promise.all([page.waitForURL(`**/releases/2026.3/systems/${row.system}/#${row.star}`), point.click({ force: true })]);
      await page.screenshot({ path: join(ARTIFACTS, 'hover-clicked-object-row.png') });
      expect(errors).toEqual([]);
      await context.close();
    },
    PAGE_TIMEOUT_MS,
  );
});
