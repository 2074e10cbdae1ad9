import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { runCommandLine } from './cli-harness.js';

/**
 * `audit` on a small export written by hand (tests/fixtures/audit/larkspur-two-wards: five invented
 * Larkspur Bay patients in two wards, 30 November 2026, times UTC). Every figure below is worked by
 * hand from the NDJSON under the bundled policy: standard range 94-98 % (BTS 2017, Tables 1-3), at
 * risk 88-92 % (BTS 2017, Table 4), a reading standing at most 120 min (titrationReview, local
 * choice); measures as in the BTS emergency oxygen audits (prescription present, target range
 * documented, SpO2 within target; from memory).
 *
 * Ward 7 (Respiratory), stays 07:00-14:00:
 * - A, 70, COPD (ICD-10 J44.1): order 08:00 "2 L/min nasal cannula, target SpO2 94-98%". On oxygen,
 *   with an order and a target range, but COPD calls for 88-92 % (BTS 2017 Table 4): not the range for
 *   risk, and an at-risk patient on the standard range. SpO2 judged against 88-92 %: 08:00 93 % above
 *   on oxygen 60 min; 09:00 95 % above 60 min; 10:00 91 % in range until the cap at 12:00, 120 min;
 *   12:00-14:00 not observed, 120 min. A: in 120, above on O2 120, observed 240, unobserved 120.
 * - B, 55, no risk: order 08:00 94-98 %. Range for risk: yes. 08:00 95 % in range 60 min; 09:00
 *   99 % above on oxygen until 11:00 (next reading and cap), 120 min; 11:00 flow 0 L/min recorded and
 *   99 %: above on air (not counted as above on oxygen) until the cap at 13:00, 120 min; 13:00-14:00
 *   not observed, 60 min. B: in 60, above on O2 120, above on air 120, observed 300, unobserved 60.
 * Ward 7: 2 patients, 2 on oxygen, order 2 of 2, target 2 of 2, range for risk 1 of 2, at risk on the
 * standard range 1 of 1; in 180, above on O2 240, above on air 120, below 0, observed 540 (9.0 h),
 * unobserved 180. Shares of observed: in 180/540 = 33 %, above on O2 240/540 = 44 %, below 0 %.
 *
 * Ward 3 (Acute Medicine):
 * - C, 80, stay 09:00-16:00, no order; flow 4 L/min recorded at 10:00: on oxygen without an order.
 *   09:30 93 % was on air before oxygen: not counted. No ordered range, so judged against 94-98 %:
 *   10:00 90 % below until 11:30, 90 min; 11:30 96 % in range until the cap at 13:30, 120 min;
 *   13:30-16:00 not observed, 150 min. C: in 120, below 90, observed 210, unobserved 150.
 * - D, 62, stay 08:30-15:00: completed MedicationRequest 09:00 "simple face mask at 5 L/min", no
 *   target. Order yes, target no. Judged against 94-98 %: 09:00 97 % in range, capped at 11:00, 120
 *   min; 11:00-13:00 not observed (the readings are 4 h apart), 120 min; 13:00 99 % above on oxygen
 *   to discharge at 15:00, 120 min. D: in 120, above on O2 120, observed 240, unobserved 120.
 * - E, 45, stay 08:00-12:00: SpO2 97 % at 09:00, never on oxygen.
 * Ward 3: 3 patients, 2 on oxygen, order 1 of 2, target 0 of 1, range for risk 0 of 0, at risk on
 * standard 0 of 0; in 240, above on O2 120, below 90, observed 450 (7.5 h), unobserved 270. Shares: in
 * 240/450 = 53 %, above on O2 120/450 = 27 %, below 90/450 = 20 %.
 *
 * All wards: 5 patients, 4 on oxygen, order 3 of 4 (75 %), target 2 of 3 (67 %), range for risk 1 of 2
 * (50 %), at risk on standard 1 of 1; in 420, above on O2 360, above on air 120, below 90, observed
 * 990 (16.5 h), unobserved 450. The period is the export's span: 07:00 (first admission) to 16:00.
 */

const EXPORT = new URL('../fixtures/audit/larkspur-two-wards', import.meta.url).pathname;
let tmp: string | undefined;

afterEach(() => {
  if (tmp !== undefined) {
    rmSync(tmp, { recursive: true, force: true });
    tmp = undefined;
  }
});

function tempDir(): string {
  tmp = mkdtempSync(join(tmpdir(), 'audit-command-'));
  return tmp;
}

const count = (c: number, of: number, percent: number | null): Record<string, number | null> => ({ count: c, of, percent });

describe('audit', () => {
  it('gives the hand-worked figures for the two-ward export', async () => {
    const run = await runCommandLine(['audit', EXPORT, '--json', '-']);
    expect(run.code).toBe(0);
    const json = JSON.parse(run.stdout);
    expect(json.period).toEqual({ from: '2026-11-30T07:00:00.000Z', to: '2026-11-30T16:00:00.000Z' });
    const bundled = readFileSync(new URL('../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');
    const sha = createHash('sha256').update(bundled).digest('hex');
    expect(json.policy).toEqual({ id: 'based-on-bts-2017', version: '1.0.0', contentSha256: sha });
    expect(json.source).toEqual({ files: 6, resourcesNotUsed: 0, malformedLines: 0 });
    expect(json.wards).toEqual([
      {
        ward: 'Ward 3 (Acute Medicine)',
        patients: 3,
        underMinimumAge: 0,
        onOxygen: 2,
        withOrder: count(1, 2, 50),
        withTargetRange: count(0, 1, 0),
        withRangeForRisk: count(0, 0, null),
        atRiskOnStandardRange: count(0, 0, null),
        time: { inRangeMinutes: 240, aboveOnOxygenMinutes: 120, aboveOnAirMinutes: 0, belowMinutes: 90, observedMinutes: 450, unobservedMinutes: 270, notJudgedMinutes: 0 },
      },
      {
        ward: 'Ward 7 (Respiratory)',
        patients: 2,
        underMinimumAge: 0,
        onOxygen: 2,
        withOrder: count(2, 2, 100),
        withTargetRange: count(2, 2, 100),
        withRangeForRisk: count(1, 2, 50),
        atRiskOnStandardRange: count(1, 1, 100),
        time: { inRangeMinutes: 180, aboveOnOxygenMinutes: 240, aboveOnAirMinutes: 120, belowMinutes: 0, observedMinutes: 540, unobservedMinutes: 180, notJudgedMinutes: 0 },
      },
    ]);
    expect(json.overall).toEqual({
      ward: 'All wards',
      patients: 5,
      underMinimumAge: 0,
      onOxygen: 4,
      withOrder: count(3, 4, 75),
      withTargetRange: count(2, 3, 67),
      withRangeForRisk: count(1, 2, 50),
      atRiskOnStandardRange: count(1, 1, 100),
      time: { inRangeMinutes: 420, aboveOnOxygenMinutes: 360, aboveOnAirMinutes: 120, belowMinutes: 90, observedMinutes: 990, unobservedMinutes: 450, notJudgedMinutes: 0 },
    });
  });

  it('prints a table with every share beside its denominator', async () => {
    const run = await runCommandLine(['audit', EXPORT]);
    expect(run.code).toBe(0);
    const overall = run.stdout.split('\n').find((line) => line.startsWith('All wards'));
    expect(overall?.split(/\s{2,}/)).toEqual([
      'All wards', '5', '4', '3 of 4 (75 %)', '2 of 3 (67 %)', '1 of 2 (50 %)', '1 of 1 (100 %)', '16.5 h', '42 %', '36 %', '9 %',
    ]);
    expect(run.stdout).toContain('Advisory only');
  });

  it('audits only the period asked for, using no reading from before it', async () => {
    // From 12:00 every stay still overlaps (E's ends at 12:00): 5 patients. B has been on air since the
    // flow of 0 at 11:00, so 3 are on oxygen in the period (A, C, D). Readings before 12:00 do not
    // stand into it: A (last reading 10:00) and C (11:30) are not observed, nor D until its 13:00 99 %,
    // above on oxygen until discharge at 15:00, 120 min: the only observed time.
    const run = await runCommandLine(['audit', EXPORT, '--from', '2026-11-30T12:00:00Z', '--json', '-']);
    const json = JSON.parse(run.stdout);
    expect(json.overall.patients).toBe(5);
    expect(json.overall.onOxygen).toBe(3);
    expect(json.overall.time.observedMinutes).toBe(120);
    expect(json.overall.time.aboveOnOxygenMinutes).toBe(120);
    // Not observed: A 12:00-14:00, C 12:00-16:00 and D 12:00-13:00: 120 + 240 + 60 = 420 min.
    expect(json.overall.time.unobservedMinutes).toBe(420);
  });

  it('writes a self-contained HTML report and a JSON file', async () => {
    const dir = tempDir();
    const htmlPath = join(dir, 'audit.html');
    const jsonPath = join(dir, 'audit.json');
    const run = await runCommandLine(['audit', EXPORT, '--html', htmlPath, '--json', jsonPath]);
    expect(run.code).toBe(0);
    const page = readFileSync(htmlPath, 'utf8');
    expect(page).not.toMatch(/<script|https?:\/\/(?!www\.w3\.org\/2000\/svg)/);
    expect(page).toContain('data-ward-measures="Ward 7 (Respiratory)"');
    expect(JSON.parse(readFileSync(jsonPath, 'utf8')).overall.onOxygen).toBe(4);
  });

  it('gives overall figures equal to the sum of the ward figures on a generated export', async () => {
    // An invariant, not a value: each patient belongs to one ward (their newest Encounter's location),
    // so every count, denominator and minute overall is the sum over the wards. The export is the
    // invented Larkspur Bay demo (demo-export, fixed seed), a few hundred orders.
    const dir = join(tempDir(), 'export');
    expect((await runCommandLine(['demo-export', '--orders', '300', '--seed', '7', dir])).code).toBe(0);
    const run = await runCommandLine(['audit', dir, '--json', '-']);
    expect(run.code).toBe(0);
    const json = JSON.parse(run.stdout);
    expect(json.wards.length).toBeGreaterThan(1);
    expect(json.overall.onOxygen).toBeGreaterThan(0);
    const paths = [
      ['patients'], ['underMinimumAge'], ['onOxygen'],
      ...['withOrder', 'withTargetRange', 'withRangeForRisk', 'atRiskOnStandardRange'].flatMap((k) => [[k, 'count'], [k, 'of']]),
      ...['inRangeMinutes', 'aboveOnOxygenMinutes', 'aboveOnAirMinutes', 'belowMinutes', 'observedMinutes', 'unobservedMinutes', 'notJudgedMinutes'].map((k) => ['time', k]),
    ];
    const at = (o: any, path: readonly string[]): number => path.reduce((v, k) => v[k], o);
    for (const path of paths) {
      const sum = json.wards.reduce((total: number, w: unknown) => total + at(w, path), 0);
      // Minutes are rounded to 0.1 per ward in the JSON, so their sum may differ by 0.05 a ward.
      expect(Math.abs(at(json.overall, path) - sum), path.join('.')).toBeLessThanOrEqual(0.05 * json.wards.length + 1e-9);
    }
    // Every patient of the export is counted once: the default period spans the whole export.
    const patients = readFileSync(join(dir, 'Patient.ndjson'), 'utf8').split('\n').filter((l) => l.trim() !== '').length;
    expect(json.overall.patients).toBe(patients);
  }, 120_000);

  describe('edge cases', () => {
    it('refuses a missing directory with exit 1 and a directory with no NDJSON with exit 1', async () => {
      expect((await runCommandLine(['audit', join(tempDir(), 'nowhere')])).code).toBe(1);
      expect((await runCommandLine(['audit', tempDir()])).code).toBe(1);
    });

    it('skips lines that are not JSON without echoing them', async () => {
      const dir = tempDir();
      writeFileSync(join(dir, 'Observation.ndjson'), `${readFileSync(join(EXPORT, 'Observation.ndjson'), 'utf8')}not json SECRET-LINE\n`);
      writeFileSync(join(dir, 'Encounter.ndjson'), readFileSync(join(EXPORT, 'Encounter.ndjson'), 'utf8'));
      const run = await runCommandLine(['audit', dir]);
      expect(run.code).toBe(0);
      expect(run.stdout).toContain('1 lines were not FHIR resources and were skipped (first: Observation.ndjson line 15: not valid JSON)');
      expect(run.stdout + run.stderr).not.toContain('SECRET-LINE');
    });

    it('refuses a policy that is not valid with exit 2, each problem with its line, column and fix, never its text', async () => {
      // BTS 2017 Table 4 keeps the at-risk range (88-92 %) below the standard range (94-98 %); 88-96 % overlaps it.
      const dir = tempDir();
      const bundled = readFileSync(new URL('../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');
      const widened = bundled.replace('hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', 'hypercapnicRisk: { lowPercent: 88, highPercent: 96 }');
      expect(widened).not.toBe(bundled);
      const policy = join(dir, 'widened.yaml');
      writeFileSync(policy, widened);
      const line = widened.split('\n').findIndex((l) => l.includes('highPercent: 96')) + 1;
      const run = await runCommandLine(['audit', EXPORT, '--policy', policy]);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain(`${policy}:${line}:3: targets.hypercapnicRisk: the at-risk range 88–96 %`);
      expect(run.stderr).toMatch(/\n {4}fix: keep targets\.hypercapnicRisk\.highPercent at or below/);
      expect(run.stderr).not.toContain('lowPercent: 88, highPercent: 96');
    });

    it('answers a usage error with exit 2', async () => {
      expect((await runCommandLine(['audit'])).code).toBe(2);
      expect((await runCommandLine(['audit', EXPORT, '--from', '2026-12-01', '--to', '2026-11-30'])).code).toBe(2);
      expect((await runCommandLine(['audit', EXPORT, '--from', 'yesterday'])).code).toBe(2);
    });
  });
});
