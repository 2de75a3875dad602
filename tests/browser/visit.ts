/**
 * A visit of one built page in Chromium (playwright-core): console errors, failed requests,
 * requests outside the site, serious or critical axe-core violations, sideways overflow, and a
 * full-page screenshot into tests/artifacts/ for review.
 */
import { mkdirSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { AxeBuilder } from '@axe-core/playwright';
import { type Browser, chromium } from 'playwright-core';
import { expect } from 'vitest';
import { serveStatic, type StaticServer } from '../report/serveStatic.ts';

export const CHROMIUM = '/usr/bin/chromium';
export const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage'];
export const ARTIFACTS = fileURLToPath(new URL('../artifacts/', import.meta.url));
export const LAPTOP = { width: 1366, height: 900 };
export const PHONE = { width: 390, height: 844 };

/** A built site served under `base` and a Chromium to visit it; close() also removes the build folder. */
export interface SiteInBrowser {
  browser: Browser;
  server: StaticServer;
  visit: (path: string, shot: string, viewport?: { width: number; height: number }) => Promise<Visit>;
  close: () => Promise<void>;
}

export async function openInChromium(built: { dist: string; tmp: string }, base: string): Promise<SiteInBrowser> {
  const server = await serveStatic(built.dist, base);
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  mkdirSync(ARTIFACTS, { recursive: true });
  return {
    browser,
    server,
    visit: (path, shot, viewport = LAPTOP) => visit(browser, server, base, path, shot, viewport),
    close: async () => {
      await browser.close();
      await server.close();
      await rm(built.tmp, { recursive: true, force: true });
    },
  };
}

export interface Visit {
  consoleErrors: string[];
  failed: string[];
  outside: string[];
  serious: { id: string; impact: string | null | undefined; nodes: number; help: string }[];
  /** Every axe-core violation, of any impact, as "rule/impact". */
  all: string[];
  overflowPx: number;
}

export async function visit(browser: Browser, server: StaticServer, base: string, path: string, shot: string, viewport = LAPTOP): Promise<Visit> {
  // axe needs a page from a context (not browser.newPage()).
  const context = await browser.newContext({ viewport });
  const page = await context.newPage();
  const out: Visit = { consoleErrors: [], failed: [], outside: [], serious: [], all: [], overflowPx: 0 };
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
    if (!url.startsWith(`${server.origin}${base}`) && !url.startsWith('data:')) out.outside.push(url);
  });
  const response = await page.goto(`${server.url}${path}`, { waitUntil: 'load' });
  expect(response?.status()).toBe(200);
  await page.evaluate(() => document.fonts.ready);
  const axe = await new AxeBuilder({ page }).analyze();
  out.serious = axe.violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => ({ id: v.id, impact: v.impact, nodes: v.nodes.length, help: v.help }));
  out.all = axe.violations.map((v) => `${v.id}/${v.impact}`);
  out.overflowPx = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  await page.screenshot({ path: join(ARTIFACTS, `${shot}.png`), fullPage: true });
  await context.close();
  return out;
}

export function expectClean(v: Visit): void {
  expect(v.consoleErrors).toEqual([]);
  expect(v.failed).toEqual([]);
  expect(v.outside).toEqual([]);
  expect(v.serious).toEqual([]);
}
