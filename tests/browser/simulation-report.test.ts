import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCommandLine } from '../cli/cli-harness.js';

/**
 * The simulation's HTML report in a real browser (Debian's Chromium through playwright-core, found as
 * review-pages.test.ts finds it): opened from disk, both charts drawn, the bars and bands matching the
 * JSON of the same run, and no console error (a Content-Security-Policy violation is one). Screenshot
 * in test-output/screenshots/simulation-report.png.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const CHROMIUM = '/usr/bin/chromium';
const HAVE_CHROMIUM = existsSync(CHROMIUM);
const IN_CI = process.env['CI'] !== undefined && process.env['CI'] !== '';
const SCREENSHOTS = join(ROOT, 'test-output', 'screenshots');
const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];
const TSANZ = join(ROOT, 'policies/based-on-tsanz-2015.yaml');

const work = mkdtempSync(join(tmpdir(), 'simulation-report-test-'));
let browser: Browser | undefined;

beforeAll(async () => {
  if (!HAVE_CHROMIUM) {
    if (IN_CI) throw new Error(`${CHROMIUM} is missing: CI must run the browser tests`);
    return;
  }
  mkdirSync(SCREENSHOTS, { recursive: true });
  browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
}, 30_000);

afterAll(async () => {
  await browser?.close();
  rmSync(work, { recursive: true, force: true });
});

describe.skipIf(!HAVE_CHROMIUM && !IN_CI)('the simulation report in Chromium', () => {
  it('opens from disk with both charts, bars and bands matching the JSON, and no console errors', async () => {
    const exportDir = join(work, 'export');
    expect((await runCommandLine(['demo-export', '--orders', '60', exportDir])).code).toBe(0);
    const htmlFile = join(work, 'report.html');
    const jsonFile = join(work, 'report.json');
    const run = await runCommandLine(['simulate', '--quiet', '--policy', TSANZ, '--html', htmlFile, '--json', jsonFile, exportDir]);
    expect(run.code).toBe(0);
    const json = JSON.parse(readFileSync(jsonFile, 'utf8'));

    const page = await (browser as Browser).newPage({ viewport: { width: 1100, height: 900 } });
    const problems: string[] = [];
    page.on('console', (message) => {
      if (message.type() === 'error' || /content security policy/i.test(message.text())) problems.push(message.text());
    });
    page.on('pageerror', (error) => problems.push(error.message));
    page.on('request', (request) => {
      if (!request.url().startsWith('file:')) problems.push(`fetched ${request.url()}`);
    });
    await page.goto(pathToFileURL(htmlFile).href);

    // Advisories per rule: one pair of bars per rule, each bar's count the JSON's total for that rule and side.
    const bars = await page.locator('#rule-chart svg g[data-rule-bars] rect').evaluateAll((rects) =>
      rects.map((r) => ({ rule: r.parentElement?.getAttribute('data-rule-bars') ?? '', side: r.getAttribute('data-policy') ?? '', count: Number(r.getAttribute('data-count')) })),
    );
    const expected = new Map<string, number>();
    for (const r of json.tally.byRuleIndicator) {
      expected.set(`${r.ruleId} baseline`, (expected.get(`${r.ruleId} baseline`) ?? 0) + r.baseline);
      expected.set(`${r.ruleId} proposed`, (expected.get(`${r.ruleId} proposed`) ?? 0) + r.proposed);
    }
    expect(new Map(bars.map((b) => [`${b.rule} ${b.side}`, b.count]))).toStrictEqual(expected);

    // SpO2 at order time: the histogram's bins are the JSON's, and each policy's two bands are drawn.
    const bins = await page.locator('#spo2-chart svg rect[data-spo2-bin]').evaluateAll((rects) => rects.map((r) => [Number(r.getAttribute('data-spo2-bin')), Number(r.getAttribute('data-count'))]));
    const histogram: number[] = json.tally.spo2Histogram;
    expect(bins).toStrictEqual(histogram.flatMap((count, percent) => (count > 0 ? [[percent, count]] : [])));
    const bands = await page.locator('#spo2-chart svg rect[data-band]').evaluateAll((rects) =>
      rects.map((r) => `${r.getAttribute('data-policy')} ${r.getAttribute('data-band')} ${r.getAttribute('data-low')}-${r.getAttribute('data-high')}`).sort(),
    );
    // BTS 2017: 94-98 % standard, 88-92 % at hypercapnic risk (Tables 1-4); TSANZ 2015: 92-96 %, 88-92 %.
    expect(bands).toStrictEqual(['baseline hypercapnic-risk 88-92', 'baseline standard 94-98', 'proposed hypercapnic-risk 88-92', 'proposed standard 92-96']);
    expect(await page.locator('#totals [data-total="changed"]').textContent()).toContain(String(json.tally.ordersChanged));
    expect(await page.locator('script').count()).toBe(0);

    await page.screenshot({ path: join(SCREENSHOTS, 'simulation-report.png'), fullPage: true });
    await page.close();
    expect(problems).toStrictEqual([]);
  }, 120_000);
});
