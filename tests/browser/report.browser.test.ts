/**
 * The built report in a real browser: Debian's Chromium driven by
 * playwright-core, the site served over HTTP on 127.0.0.1 under its base path.
 * Each release overview and one rung page must load with no console error, no
 * failed request and no request outside the site; axe-core must find no
 * serious or critical accessibility violation. Screenshots (laptop, phone and
 * print) go to tests/artifacts/ for review.
 */
import { mkdirSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { AxeBuilder } from '@axe-core/playwright';
import { type Browser, chromium } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BASE, buildFixture, FIXTURE_IDS, type FixtureBuild } from '../report/fixtureBuild.ts';
import { serveStatic, type StaticServer } from '../report/serveStatic.ts';

const CHROMIUM = '/usr/bin/chromium';
const ARTIFACTS = fileURLToPath(new URL('../artifacts/', import.meta.url));
const BUILD_TIMEOUT_MS = 300_000;
const PAGE_TIMEOUT_MS = 120_000;

const LAPTOP = { width: 1366, height: 900 };
const PHONE = { width: 390, height: 844 };

let built: FixtureBuild;
let server: StaticServer;
let browser: Browser;

beforeAll(async () => {
  built = await buildFixture();
  server = await serveStatic(built.dist, BASE);
  browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage'] });
  mkdirSync(ARTIFACTS, { recursive: true });
}, BUILD_TIMEOUT_MS);

afterAll(async () => {
  await browser?.close();
  await server?.close();
  if (built) await rm(built.tmp, { recursive: true, force: true });
});

interface Visit {
  consoleErrors: string[];
  failed: string[];
  outside: string[];
  serious: { id: string; impact: string | null | undefined; nodes: number; help: string }[];
  overflowPx: number;
}

async function visit(path: string, shot: string, viewport = LAPTOP): Promise<Visit> {
  // axe needs a page from a context (not browser.newPage()).
  const context = await browser.newContext({ viewport });
  const page = await context.newPage();
  const out: Visit = { consoleErrors: [], failed: [], outside: [], serious: [], overflowPx: 0 };
  page.on('console', (m) => {
    if (m.type() === 'error') out.consoleErrors.push(m.text());
  });
  page.on('pageerror', (e) => out.consoleErrors.push(String(e)));
  page.on('requestfailed', (r) => out.failed.push(`${r.url()} (${r.failure()?.errorText})`));
  page.on('response', (r) => {
    if (r.status() >= 400) out.failed.push(`${r.url()} (HTTP ${r.status()})`);
  });
  page.on('request', (r) => {
    const url = r.url();
    if (!url.startsWith(`${server.origin}${BASE}`) && !url.startsWith('data:')) out.outside.push(url);
  });
  const response = await page.goto(`${server.url}${path}`, { waitUntil: 'load' });
  expect(response?.status()).toBe(200);
  await page.evaluate(() => document.fonts.ready);
  const axe = await new AxeBuilder({ page }).analyze();
  out.serious = axe.violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.length, help: v.help }));
  out.overflowPx = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  await page.screenshot({ path: join(ARTIFACTS, `${shot}.png`), fullPage: true });
  await context.close();
  return out;
}

function expectClean(v: Visit): void {
  expect(v.consoleErrors).toEqual([]);
  expect(v.failed).toEqual([]);
  expect(v.outside).toEqual([]);
  expect(v.serious).toEqual([]);
}

describe('report in Chromium', () => {
  for (const id of FIXTURE_IDS) {
    it(`release ${id} overview loads cleanly and passes axe`, async () => {
      expectClean(await visit(`releases/${id}/`, `overview-${id}`));
    }, PAGE_TIMEOUT_MS);
  }

  it('a rung page (Cepheids of the dense release) loads cleanly and passes axe', async () => {
    expectClean(await visit('releases/2026.1/cepheids/', 'rung-2026.1-cepheids'));
  }, PAGE_TIMEOUT_MS);

  it('a figure page and the home page load cleanly and pass axe', async () => {
    expectClean(await visit('releases/2026.2/figures/variants/', 'figure-2026.2-variants'));
    expectClean(await visit('', 'home'));
  }, PAGE_TIMEOUT_MS);

  it('fits a phone screen without sideways scrolling of the page', async () => {
    const v = await visit('releases/2026.1/', 'overview-2026.1-phone', PHONE);
    expectClean(v);
    expect(v.overflowPx).toBeLessThanOrEqual(0);
  }, PAGE_TIMEOUT_MS);

  it('prints a rung page without the navigation', async () => {
    const context = await browser.newContext({ viewport: LAPTOP });
    const page = await context.newPage();
    await page.goto(`${server.url}releases/2026.1/parallax/`);
    await page.emulateMedia({ media: 'print' });
    expect(await page.locator('.release-nav').isVisible()).toBe(false);
    expect(await page.locator('.notice').isVisible()).toBe(true);
    expect(await page.locator('aside.cautions').isVisible()).toBe(true);
    await page.screenshot({ path: join(ARTIFACTS, 'print-2026.1-parallax.png'), fullPage: true });
    const pdf = await page.pdf({ format: 'A4' });
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    await context.close();
  }, PAGE_TIMEOUT_MS);
});
