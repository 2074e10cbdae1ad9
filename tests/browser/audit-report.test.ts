import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCommandLine } from '../cli/cli-harness.js';

/**
 * The audit's HTML report in a real browser: Debian's Chromium driven by playwright-core, found as
 * tests/browser/review-pages.test.ts finds it. The report is written by `audit --html` from the
 * hand-worked two-ward export (tests/cli/audit-command.test.ts works out its figures), opened from
 * disk, and must draw both charts with one mark per ward and measure, match its own tables, fetch
 * nothing, and log no error. Screenshot in test-output/screenshots/audit-report.png.
 *
 * Without /usr/bin/chromium the file is skipped locally, but fails in CI (`CI` set).
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const CHROMIUM = '/usr/bin/chromium';
const HAVE_CHROMIUM = existsSync(CHROMIUM);
const IN_CI = process.env['CI'] !== undefined && process.env['CI'] !== '';
const SCREENSHOTS = join(ROOT, 'test-output', 'screenshots');
const EXPORT = fileURLToPath(new URL('../fixtures/audit/larkspur-two-wards', import.meta.url));
/** Launch flags from the toolchain notes, as in review-pages.test.ts. */
const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

let browser: Browser | undefined;
let page: Page;
let dir = '';
const problems: string[] = [];
const requests: string[] = [];

beforeAll(async () => {
  if (!HAVE_CHROMIUM) {
    if (IN_CI) throw new Error(`${CHROMIUM} is missing: CI must run the browser test (.ci/run installs chromium with apt)`);
    return;
  }
  mkdirSync(SCREENSHOTS, { recursive: true });
  dir = mkdtempSync(join(tmpdir(), 'audit-report-browser-'));
  const htmlPath = join(dir, 'audit.html');
  const run = await runCommandLine(['audit', EXPORT, '--html', htmlPath]);
  expect(run.code).toBe(0);
  browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  page = await browser.newPage({ viewport: { width: 1100, height: 900 } });
  page.on('console', (message) => {
    if (message.type() === 'error' || message.type() === 'warning') problems.push(message.text());
  });
  page.on('pageerror', (error) => problems.push(error.message));
  page.on('request', (request) => requests.push(request.url()));
  await page.goto(pathToFileURL(htmlPath).href);
}, 60_000);

afterAll(async () => {
  await browser?.close();
  if (dir !== '') rmSync(dir, { recursive: true, force: true });
});

describe.skipIf(!HAVE_CHROMIUM && !IN_CI)(
  `the audit report in Chromium${HAVE_CHROMIUM ? '' : ` (skipped: ${CHROMIUM} is missing)`}`,
  () => {
    it('draws one group of measure bars a ward and overall, each matching its table cell', async () => {
      const groups = await page.locator('#measures-chart g[data-ward-measures]').evaluateAll((gs) =>
        gs.map((g) => ({
          ward: g.getAttribute('data-ward-measures'),
          bars: [...g.querySelectorAll('g[data-measure]')].map((b) => ({
            measure: b.getAttribute('data-measure'),
            text: b.querySelector('text')?.textContent ?? '',
            width: Number(b.querySelector('rect')?.getAttribute('width')),
          })),
        })),
      );
      expect(groups.map((g) => g.ward)).toEqual(['Ward 3 (Acute Medicine)', 'Ward 7 (Respiratory)', 'All wards']);
      for (const group of groups) {
        expect(group.bars).toHaveLength(4);
        for (const bar of group.bars) {
          const cell = await page
            .locator(`tr[data-ward-row="${group.ward ?? ''}"] td[data-measure="${bar.measure ?? ''}"]`)
            .textContent();
          expect(bar.text).toBe(cell);
        }
      }
      // Overall "On oxygen with an order" 3 of 4 (hand-worked in tests/cli/audit-command.test.ts) is
      // drawn three quarters as long as a 100 % bar (Ward 7's 2 of 2).
      const overall = groups[2]?.bars[0]?.width ?? 0;
      const full = groups[1]?.bars[0]?.width ?? 0;
      expect(overall / full).toBeCloseTo(0.75, 2);
    });

    it('draws one stacked time bar a ward whose parts fill the bar in proportion to the minutes', async () => {
      const bars = await page.locator('#time-chart g[data-ward-time]').evaluateAll((gs) =>
        gs.map((g) => ({
          ward: g.getAttribute('data-ward-time'),
          observed: Number(g.getAttribute('data-observed-minutes')),
          parts: [...g.querySelectorAll('rect[data-part]')].map((r) => ({
            minutes: Number(r.getAttribute('data-minutes')),
            width: Number(r.getAttribute('width')),
          })),
        })),
      );
      expect(bars.map((b) => b.ward)).toEqual(['Ward 3 (Acute Medicine)', 'Ward 7 (Respiratory)', 'All wards']);
      const widths = bars.map((b) => b.parts.reduce((sum, p) => sum + p.width, 0));
      for (const [i, bar] of bars.entries()) {
        expect(bar.parts.reduce((sum, p) => sum + p.minutes, 0)).toBeCloseTo(bar.observed, 1);
        expect(widths[i]).toBeCloseTo(widths[0] ?? 0, 0);
        for (const part of bar.parts) {
          expect(part.width / (widths[i] ?? 1)).toBeCloseTo(part.minutes / bar.observed, 2);
        }
      }
    });

    it('fetches nothing beyond its own file, logs no error and prints', async () => {
      expect(requests.every((url) => url.startsWith('file://'))).toBe(true);
      expect(await page.locator('script').count()).toBe(0);
      await page.emulateMedia({ media: 'print' });
      await page.screenshot({ path: join(SCREENSHOTS, 'audit-report.png'), fullPage: true });
      expect(problems).toEqual([]);
    });
  },
);
