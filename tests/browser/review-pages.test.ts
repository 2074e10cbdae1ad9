import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

/**
 * The review pages in a real browser: Debian's Chromium driven by playwright-core, against the real
 * service started as a child process in demo mode, so the demo seed (src/demo) fills its store. The
 * list is loaded and filtered through its form, an advisory's chart is checked against the JSON API
 * (one point per SpO2 reading, the target band where the axis puts the target), the summary is checked
 * against /review/api/summary, and no page may trip its Content-Security-Policy. Screenshots go to
 * test-output/screenshots/.
 *
 * Without /usr/bin/chromium the file is skipped locally, but fails in CI (`CI` set), which must run it
 * (.ci/run installs Chromium with apt).
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const CHROMIUM = '/usr/bin/chromium';
const HAVE_CHROMIUM = existsSync(CHROMIUM);
const IN_CI = process.env['CI'] !== undefined && process.env['CI'] !== '';
const SCREENSHOTS = join(ROOT, 'test-output', 'screenshots');
/** A page load, a form submit and a full-page screenshot each take a second or two on a shared machine. */
const BROWSER_STEP_MS = 60_000;

/** Launch flags from the toolchain notes (shared/reference/toolchain.md, "Chromium for browser tests"). */
const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

let service: ChildProcess | undefined;
let browser: Browser | undefined;
let page: Page;
let base = '';
let dataDir = '';
/** Console messages and page errors that name a Content-Security-Policy violation. */
const cspViolations: string[] = [];

/** Starts the service on a free port and resolves with its base URL once it logs that it listens. */
function startService(): Promise<string> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: ROOT,
    env: { PATH: process.env['PATH'] ?? '', HOST: '127.0.0.1', PORT: '0', LOG_LEVEL: 'info', OXYGEN_CHECKER_DATA_DIR: dataDir },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  service = child;
  return new Promise((resolve, reject) => {
    let out = '';
    let err = '';
    child.stderr?.on('data', (chunk: Buffer) => (err += chunk.toString()));
    child.stdout?.on('data', (chunk: Buffer) => {
      out += chunk.toString();
      for (const line of out.split('\n')) {
        if (!line.includes('listening')) continue;
        const parsed = JSON.parse(line) as { url?: string };
        if (parsed.url !== undefined) resolve(parsed.url);
      }
    });
    child.once('exit', (code) => reject(new Error(`service exited (${String(code)}) before listening: ${err}`)));
  });
}

async function getJson<T>(path: string): Promise<T> {
  const answer = await fetch(`${base}${path}`);
  expect(answer.status).toBe(200);
  return (await answer.json()) as T;
}

async function shot(name: string): Promise<void> {
  await page.screenshot({ path: join(SCREENSHOTS, `${name}.png`), fullPage: true });
}

/** The list's rows as shown: card uuid, unit cell, rule cell, outcome attribute. */
async function listedRows(): Promise<{ uuid: string; unit: string; rule: string; outcome: string }[]> {
  return page.locator('#advisory-table tr[data-card-uuid]').evaluateAll((rows) =>
    rows.map((row) => {
      return {
        uuid: row.getAttribute('data-card-uuid') ?? '',
        unit: row.querySelector('td[data-col="unit"]')?.textContent?.trim() ?? '',
        rule: row.querySelector('td[data-col="rule"]')?.textContent?.trim() ?? '',
        outcome: row.querySelector('td[data-outcome]')?.getAttribute('data-outcome') ?? '',
      };
    }),
  );
}

async function listedTotal(): Promise<number> {
  return Number(await page.locator('#page-status').getAttribute('data-total'));
}

beforeAll(async () => {
  if (!HAVE_CHROMIUM) {
    if (IN_CI) throw new Error(`${CHROMIUM} is missing: CI must run the browser test (.ci/run installs chromium with apt)`);
    return;
  }
  mkdirSync(SCREENSHOTS, { recursive: true });
  dataDir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-browser-'));
  base = await startService();
  browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  page = await context.newPage();
  page.on('console', (message) => {
    if (/content security policy/i.test(message.text())) cspViolations.push(message.text());
  });
  page.on('pageerror', (error) => {
    if (/content security policy/i.test(error.message)) cspViolations.push(error.message);
  });
}, 30_000);

afterAll(async () => {
  await browser?.close();
  service?.kill('SIGTERM');
  if (dataDir !== '') rmSync(dataDir, { recursive: true, force: true });
  if (browser !== undefined) process.stdout.write(`review page screenshots: ${SCREENSHOTS}\n`);
});

describe.skipIf(!HAVE_CHROMIUM && !IN_CI)(
  `review pages in Chromium${HAVE_CHROMIUM ? '' : ` (skipped: ${CHROMIUM} is missing; apt-get install chromium)`}`,
  () => {
    it('lists the seeded advisories and filters them by unit and by outcome and rule through the form', async () => {
      await page.goto(`${base}/review`);
      const all = await listedTotal();
      const apiAll = await getJson<{ total: number }>('/review/api/advisories');
      expect(all).toBe(apiAll.total);
      expect(all).toBeGreaterThan(0);
      expect((await listedRows()).length).toBeGreaterThan(0);
      await shot('list');

      // by unit: the form's own options, the first ward that holds only part of the list
      const units = await page.locator('#filter-unit option').evaluateAll((options) =>
        options.map((o) => o.getAttribute('value') ?? '').filter((v) => v !== ''),
      );
      expect(units.length).toBeGreaterThan(1);
      const unit = units[0] ?? '';
      await page.selectOption('#filter-unit', unit);
      await Promise.all([page.waitForURL(/unit=/), page.click('#filter-apply')]);
      const byUnit = await listedRows();
      expect(byUnit.length).toBeGreaterThan(0);
      expect(byUnit.every((row) => row.unit === unit)).toBe(true);
      const unitTotal = await listedTotal();
      expect(unitTotal).toBeLessThan(all);
      expect(unitTotal).toBe((await getJson<{ total: number }>(`/review/api/advisories?unit=${encodeURIComponent(unit)}`)).total);
      await shot('list-filtered-unit');

      // by outcome and rule together, from a clean form
      await page.click('#filter-clear');
      await page.waitForURL(`${base}/review`);
      await page.selectOption('#filter-outcome', 'overridden');
      await Promise.all([page.waitForURL(/outcome=overridden/), page.click('#filter-apply')]);
      const overridden = await listedRows();
      expect(overridden.length).toBeGreaterThan(0);
      expect(overridden.every((row) => row.outcome === 'overridden')).toBe(true);
      const overriddenTotal = await listedTotal();
      expect(overriddenTotal).toBeLessThan(all);
      const rule = overridden[0]?.rule ?? '';
      await page.selectOption('#filter-rule', rule);
      await Promise.all([page.waitForURL(/rule=/), page.click('#filter-apply')]);
      const both = await listedRows();
      expect(both.length).toBeGreaterThan(0);
      expect(both.every((row) => row.outcome === 'overridden' && row.rule === rule)).toBe(true);
      expect(await listedTotal()).toBeLessThanOrEqual(overriddenTotal);
      await shot('list-filtered-outcome-rule');

      // one patient: follow a row's patient link; every row then carries that patient's key
      const patientLink = page.locator('#advisory-table tr[data-card-uuid] a[data-patient-key]').first();
      const patientKey = (await patientLink.getAttribute('data-patient-key')) ?? '';
      await Promise.all([page.waitForURL(/patient=/), patientLink.click()]);
      const keys = await page
        .locator('#advisory-table a[data-patient-key]')
        .evaluateAll((links) => links.map((l) => l.getAttribute('data-patient-key') ?? ''));
      expect(keys.length).toBeGreaterThan(0);
      expect(keys.every((key) => key === patientKey)).toBe(true);
      expect(await listedTotal()).toBe((await getJson<{ total: number }>(`/review/api/advisories?patient=${patientKey}`)).total);
    }, BROWSER_STEP_MS);

    it('opens an advisory whose chart has one point per SpO2 reading and the band where the axis puts the target', async () => {
      await page.goto(`${base}/review?rule=time-above-target-on-oxygen`);
      const [first] = await listedRows();
      expect(first).toBeDefined();
      await Promise.all([page.waitForURL(/\/review\/advisories\//), page.click(`tr[data-card-uuid="${first?.uuid ?? ''}"] a[data-advisory-link]`)]);
      const api = await getJson<{
        series: { spo2: { at: string; spo2Percent: number }[]; target?: { lowPercent: number; highPercent: number } };
      }>(`/review/api/advisories/${first?.uuid ?? ''}`);
      expect(api.series.spo2.length).toBeGreaterThan(1);

      const points = await page
        .locator('#spo2-chart svg circle[data-spo2-point]')
        .evaluateAll((circles) => circles.map((c) => ({ at: c.getAttribute('data-at') ?? '', value: Number(c.getAttribute('data-value')), cy: Number(c.getAttribute('cy')) })));
      const byTime = (a: { at: string }, b: { at: string }) => a.at.localeCompare(b.at);
      expect(points.map((p) => ({ at: p.at, value: p.value })).sort(byTime)).toStrictEqual(
        api.series.spo2.map((p) => ({ at: p.at, value: p.spo2Percent })).sort(byTime),
      );

      // The y of any SpO2 value, by straight-line interpolation between the axis's first and last ticks.
      const ticks = await page
        .locator('#spo2-chart svg g[data-y-tick]')
        .evaluateAll((gs) => gs.map((g) => ({ value: Number(g.getAttribute('data-y-tick')), y: Number(g.getAttribute('data-y')) })));
      expect(ticks.length).toBeGreaterThanOrEqual(2);
      const sorted = [...ticks].sort((a, b) => a.value - b.value);
      const low = sorted[0] ?? { value: 0, y: 0 };
      const high = sorted[sorted.length - 1] ?? { value: 0, y: 0 };
      const yOf = (value: number) => low.y + ((value - low.value) * (high.y - low.y)) / (high.value - low.value);
      for (const point of points) expect(Math.abs(point.cy - yOf(point.value))).toBeLessThanOrEqual(1);

      const target = api.series.target;
      expect(target).toBeDefined();
      const band = page.locator('#spo2-chart svg rect[data-target-band]');
      expect(Number(await band.getAttribute('data-low'))).toBe(target?.lowPercent);
      expect(Number(await band.getAttribute('data-high'))).toBe(target?.highPercent);
      // the rectangle as the browser lays it out, in the SVG's own units
      const box = await band.evaluate((rect) => {
        // getBBox is SVGGraphicsElement's (the DOM library is not in this project's tsconfig)
        const b = (rect as unknown as { getBBox(): { y: number; height: number } }).getBBox();
        return { top: b.y, bottom: b.y + b.height };
      });
      expect(Math.abs(box.top - yOf(target?.highPercent ?? 0))).toBeLessThanOrEqual(1);
      expect(Math.abs(box.bottom - yOf(target?.lowPercent ?? 0))).toBeLessThanOrEqual(1);
      await shot('advisory');
      await page.emulateMedia({ media: 'print' });
      await shot('advisory-print');
      await page.emulateMedia({ media: 'screen' });
    }, BROWSER_STEP_MS);

    it('shows the summary with the same numbers as /review/api/summary', async () => {
      await page.goto(`${base}/review/summary`);
      const api = await getJson<{
        rules: { ruleId: string; fired: number; accepted: number; overridden: number; noFeedback: number }[];
        rows: { ruleId: string; unit: string; fired: number; accepted: number; overridden: number; noFeedback: number }[];
      }>('/review/api/summary');
      expect(api.rules.length).toBeGreaterThan(0);
      const read = (selector: string) =>
        page.locator(selector).evaluateAll((rows) =>
          rows.map((row) => {
            const n = (col: string) => Number(row.querySelector(`td[data-col="${col}"]`)?.textContent?.trim());
            return {
              key: `${row.getAttribute('data-rule-id') ?? ''}|${row.getAttribute('data-unit') ?? ''}`,
              counts: [n('fired'), n('accepted'), n('overridden'), n('no-feedback')],
            };
          }),
        );
      const counts = (c: { fired: number; accepted: number; overridden: number; noFeedback: number }) => [c.fired, c.accepted, c.overridden, c.noFeedback];
      const byKey = (a: { key: string }, b: { key: string }) => a.key.localeCompare(b.key);
      expect((await read('#summary-by-rule tr[data-rule-id]')).sort(byKey)).toStrictEqual(
        api.rules.map((r) => ({ key: `${r.ruleId}|`, counts: counts(r) })).sort(byKey),
      );
      expect((await read('#summary-table tr[data-rule-id][data-unit]')).sort(byKey)).toStrictEqual(
        api.rows.map((r) => ({ key: `${r.ruleId}|${r.unit}`, counts: counts(r) })).sort(byKey),
      );
      // the bar chart draws every rule, its segments adding up to the times it fired
      const bars = await page
        .locator('#summary-chart g[data-rule-bar]')
        .evaluateAll((gs) => gs.map((g) => [...g.querySelectorAll('rect[data-segment]')].reduce((sum, r) => sum + Number(r.getAttribute('data-count')), 0)));
      expect(bars.sort((a, b) => a - b)).toStrictEqual(api.rules.map((r) => r.fired).sort((a, b) => a - b));
      await shot('summary');
      await page.emulateMedia({ media: 'print' });
      await shot('summary-print');
      await page.emulateMedia({ media: 'screen' });
    }, BROWSER_STEP_MS);

    it('trips no Content-Security-Policy on any page it opened', () => {
      expect(cspViolations).toStrictEqual([]);
    });
  },
);
