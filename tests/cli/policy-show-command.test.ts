import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { PolicyView } from '../../src/cli/policy-view.js';
import { runCommandLine } from './cli-harness.js';

const COMMAND = ['policy', 'show'] as const;

const bundled = (name: string): string => new URL(`../../policies/${name}`, import.meta.url).pathname;
const btsText = (): string => readFileSync(bundled('based-on-bts-2017.yaml'), 'utf8');

function writePolicy(text: string): string {
  const file = join(mkdtempSync(join(tmpdir(), 'oxygen-order-checker-show-')), 'larkspur-bay.yaml');
  writeFileSync(file, text);
  return file;
}

/**
 * The BTS 2017 preset at the invented Larkspur Bay General Hospital with an ICU on 92–96 % (PILOT 2022
 * intermediate arm) listed first, a broader critical-care pattern on 90–94 % (ICU-ROX 2020 lower
 * limit; ICONIC 2023 upper bound) with its at-risk range capped at 90 %, one rule lowered with the
 * committee's acknowledgement, and NEWS2 switched off.
 */
const LARKSPUR = btsText()
  .replace(
    /^units: \[\].*$/m,
    [
      'units:',
      '  - name: ICU',
      '    match: { names: ["Larkspur Bay General Hospital, Intensive Care Unit"], locations: [Location/lbgh-icu] }',
      '    targets: { standard: { lowPercent: 92, highPercent: 96 } }',
      '  - name: Critical care',
      '    match: { patterns: ["*care unit*"] }',
      '    targets: { standard: { lowPercent: 90, highPercent: 94 }, hypercapnicRisk: { lowPercent: 88, highPercent: 90 } }',
    ].join('\n'),
  )
  .replace('disabledRules: []', 'disabledRules: [news2-scale-2]')
  .replace('severity: {}', 'severity: { acute-hypercapnic-acidosis: warning }')
  .replace(
    /^acknowledgements: \[\].*$/m,
    'acknowledgements: [{ ruleId: acute-hypercapnic-acidosis, change: lowered, reason: "Outreach reviews every gas at once", by: Oxygen committee, date: 2026-11-20 }]',
  );

/** The value of a labelled row: the text after the label column. */
function row(stdout: string, label: string): string {
  const line = stdout.split('\n').find((l) => l.startsWith(`  ${label}  `));
  if (line === undefined) throw new Error(`no row '${label}' in:\n${stdout}`);
  return line.slice(2 + label.length).trim();
}

describe('oxygen-order-checker policy show', () => {
  it('shows the BTS 2017 preset as a table, every value with its unit', async () => {
    const run = await runCommandLine([...COMMAND, bundled('based-on-bts-2017.yaml')]);
    expect(run.code).toBe(0);
    expect(run.stderr).toBe('');
    const out = run.stdout;
    expect(row(out, 'Standard')).toMatch(/^94–98 % +policy$/); // BTS 2017, Tables 1-3
    expect(row(out, 'At risk of hypercapnic failure')).toMatch(/^88–92 % +policy$/); // BTS 2017, Table 4
    expect(row(out, 'Oxygen toxicity (paraquat, bleomycin)')).toMatch(/^85–88 % +policy, on every unit$/); // BTS 2017, Table 3 (V2)
    expect(row(out, 'Conditions carrying risk')).toContain('copd, bronchiectasis, cystic-fibrosis'); // BTS 2017, Table 4
    expect(row(out, 'Critical SpO2 below')).toBe('85 %'); // BTS 2017, Table 2
    expect(row(out, 'Consider NIV: pH below, PaCO2 above')).toBe('7.35, 6.5 kPa'); // BTS/ICS 2016
    expect(row(out, 'Invasive ventilation: pH below')).toBe('7.25'); // BTS/ICS 2016
    expect(row(out, 'High FiO2 at least')).toBe('0.40'); // preset value (wording from memory; check locally)
    expect(row(out, 'Repeat blood gas after')).toBe('30–60 min'); // BTS 2017, Tables 2-4
    expect(row(out, 'Vital signs')).toBe('240 min');
    expect(row(out, 'Looks back over')).toBe('8 h'); // one nursing shift (common practice)
    // The harness clock is 2026-12-01 12:00 UTC, the preset's own effectiveFrom date.
    expect(row(out, 'Effective from')).toBe('2026-12-01 (in effect; the date at the site is 2026-12-01)');
    expect(row(out, 'Unit')).toBe("none asked (--unit NAME): the policy's own ranges; 0 unit overrides in the file");
    expect(row(out, 'Switched off')).toBe('none');
  });

  it('lines every value up in one column after the labels', async () => {
    const run = await runCommandLine([...COMMAND, writePolicy(LARKSPUR)]);
    const rows = run.stdout.split('\n').filter((l) => l.startsWith('  '));
    const valueColumns = new Set(rows.map((l) => /^ {2}\S.*?\S? {2,}(?=\S)/.exec(l)?.[0].length));
    expect(rows.length).toBeGreaterThan(40);
    expect([...valueColumns]).toHaveLength(1);
  });

  it("shows a unit's effective ranges with --unit, saying which override matched and that the first listed wins", async () => {
    const file = writePolicy(LARKSPUR);
    const run = await runCommandLine([...COMMAND, file, '--unit', 'LARKSPUR BAY GENERAL HOSPITAL, INTENSIVE CARE UNIT']);
    expect(run.code).toBe(0);
    expect(row(run.stdout, 'Standard')).toMatch(/^92–96 % +unit override 'ICU' \(local policy\)$/); // PILOT 2022 intermediate arm
    expect(row(run.stdout, 'At risk of hypercapnic failure')).toMatch(/^88–92 % +policy$/); // BTS 2017, Table 4
    expect(row(run.stdout, 'Oxygen toxicity (paraquat, bleomycin)')).toMatch(/^85–88 % +policy, on every unit$/); // BTS 2017, Table 3
    expect(row(run.stdout, 'Critical SpO2 below')).toBe('85 %'); // BTS 2017, Table 2: the same on every unit
    expect(row(run.stdout, 'Unit')).toBe(
      "'LARKSPUR BAY GENERAL HOSPITAL, INTENSIVE CARE UNIT': unit override 'ICU' (units.0) matched by name " +
        "'Larkspur Bay General Hospital, Intensive Care Unit'; also matched Critical care, but the first listed wins",
    );
    const hdu = await runCommandLine([...COMMAND, file, '--unit', 'Larkspur Bay General Hospital, Cardiac Care Unit']);
    expect(row(hdu.stdout, 'Standard')).toMatch(/^90–94 % +unit override 'Critical care'/); // ICU-ROX 2020; ICONIC 2023
    expect(row(hdu.stdout, 'At risk of hypercapnic failure')).toMatch(/^88–90 % +unit override 'Critical care'/);
    const byReference = await runCommandLine([...COMMAND, file, '--unit', 'Location/lbgh-icu']);
    expect(row(byReference.stdout, 'Unit')).toContain("unit override 'ICU' (units.0) matched by location 'Location/lbgh-icu'");
  });

  it('says when no override matches the unit and the policy ranges apply', async () => {
    const run = await runCommandLine([...COMMAND, writePolicy(LARKSPUR), '--unit', 'Larkspur Bay General Hospital, Ward 7']);
    expect(run.code).toBe(0);
    expect(row(run.stdout, 'Unit')).toBe(
      "'Larkspur Bay General Hospital, Ward 7': no unit override matched (2 unit overrides in the file); the policy's own ranges apply",
    );
    expect(row(run.stdout, 'Standard')).toMatch(/^94–98 % +policy$/); // BTS 2017, Tables 1-3
  });

  it('shows rules switched off, indicators changed, acknowledgements with their reasons, and the unit list', async () => {
    const run = await runCommandLine([...COMMAND, writePolicy(LARKSPUR)]);
    expect(row(run.stdout, 'Switched off')).toBe('news2-scale-2');
    expect(row(run.stdout, 'Indicators changed')).toBe('acute-hypercapnic-acidosis → warning');
    expect(row(run.stdout, 'acute-hypercapnic-acidosis lowered')).toMatch(/^Outreach reviews every gas at once +Oxygen committee, 2026-11-20$/);
    expect(row(run.stdout, '1. ICU')).toMatch(/^standard 92–96 % +name "Larkspur Bay General Hospital, Intensive Care Unit"; location Location\/lbgh-icu$/);
    expect(row(run.stdout, '2. Critical care')).toMatch(/^standard 90–94 %; at risk 88–90 % +pattern "\*care unit\*"$/);
  });

  it('says a policy is not yet in effect before its date at the site', async () => {
    const file = writePolicy(btsText().replace(/^effectiveFrom: .*$/m, 'effectiveFrom: 2027-03-01'));
    const run = await runCommandLine([...COMMAND, file], new Date('2027-02-28T23:30:00Z'));
    expect(row(run.stdout, 'Effective from')).toBe(
      '2027-03-01 (NOT YET in effect: the date at the site is 2027-02-28; loading it now uses it early)',
    );
    const old = await runCommandLine([...COMMAND, writePolicy(btsText().replace(/^effectiveFrom: .*\n/m, ''))]);
    expect(row(old.stdout, 'Effective from')).toBe('not stated: in effect once loaded');
  });

  it('gives the same view as JSON with --json', async () => {
    const run = await runCommandLine([...COMMAND, writePolicy(LARKSPUR), '--unit', 'Location/lbgh-icu', '--json']);
    expect(run.code).toBe(0);
    const view = JSON.parse(run.stdout) as PolicyView & { warnings: unknown[] };
    expect(view.targets).toStrictEqual({
      standard: { lowPercent: 92, highPercent: 96, setBy: { by: 'unit', unit: 'ICU' } }, // PILOT 2022 intermediate arm
      hypercapnicRisk: { lowPercent: 88, highPercent: 92, setBy: { by: 'policy' } }, // BTS 2017, Table 4
      oxygenToxicityRisk: { lowPercent: 85, highPercent: 88, setBy: { by: 'policy' } }, // BTS 2017, Table 3
    });
    expect(view.unit?.match).toMatchObject({ kind: 'matched', index: 0, matchedBy: "location 'Location/lbgh-icu'" });
    expect(view.thresholds.criticalSpo2BelowPercent).toBe(85); // BTS 2017, Table 2
    expect(view.rules.disabled).toStrictEqual(['news2-scale-2']);
    expect(view.acknowledgements).toStrictEqual([
      { ruleId: 'acute-hypercapnic-acidosis', change: 'lowered', reason: 'Outreach reviews every gas at once', by: 'Oxygen committee', date: '2026-11-20' },
    ]);
    expect(view.warnings).toStrictEqual([]);
  });

  describe('the device catalogue, the clinical basis, card wording and override reasons', () => {
    /** Every row under a section title, up to the blank line that ends it. */
    function section(stdout: string, title: string): string[] {
      const lines = stdout.split('\n');
      const start = lines.findIndex((l) => l.startsWith(title));
      if (start < 0) throw new Error(`no section '${title}' in:\n${stdout}`);
      const end = lines.findIndex((l, i) => i > start && l === '');
      return lines.slice(start + 1, end < 0 ? undefined : end);
    }

    it('shows each stocked device with its flow limits in L/min and each Venturi valve with its minimum O2 flow', async () => {
      const run = await runCommandLine([...COMMAND, bundled('based-on-bts-2017.yaml')]);
      expect(run.code).toBe(0);
      expect(row(run.stdout, 'Nasal cannula')).toBe('1–6 L/min'); // BTS 2017, Tables 2 and 4
      expect(row(run.stdout, 'Simple face mask')).toBe('5–10 L/min'); // BTS 2017, Table 2
      expect(row(run.stdout, 'Reservoir mask')).toBe('10–15 L/min'); // BTS 2017, Table 2 (15 L/min); BTS 2008 (10-15)
      expect(row(run.stdout, 'Venturi mask, 24 % valve')).toBe('O2 at least 2 L/min'); // BTS 2017, Table 4
      expect(row(run.stdout, 'Venturi mask, 28 % valve')).toBe('O2 at least 4 L/min'); // BTS 2017, Table 4
      expect(row(run.stdout, 'Venturi mask, 60 % valve')).toBe('O2 at least 15 L/min'); // device labelling convention (common practice)
      // The preset stocks every kind and every usual valve (24, 28, 31, 35, 40, 50, 60 %: common practice).
      expect(row(run.stdout, 'Not stocked')).toBe('none');
      expect(row(run.stdout, 'Usual Venturi valves not stocked')).toBe('none');
      const valves = section(run.stdout, 'Devices stocked').filter((l) => l.includes('% valve'));
      expect(valves).toHaveLength(7);
      // Ascending by setting, minimum flows rising with it (air-entrainment mass balance).
      const flows = valves.map((l) => Number(/at least (\d+) L\/min/.exec(l)?.[1]));
      expect(flows).toStrictEqual([...flows].sort((a, b) => a - b));
    });

    it('names the device kinds and usual Venturi valves a catalogue leaves out, in text and in --json', async () => {
      // A hospital that buys no 24 % valve and keeps no CPAP or NIV on its wards (invented, Larkspur Bay).
      const text = btsText().replace(/^ {6}- \{ fio2Percent: 24,.*\n/m, '').replace(/^ {2}cpap-niv: .*\n/m, '');
      expect(text).not.toContain('fio2Percent: 24');
      const file = writePolicy(text);
      const run = await runCommandLine([...COMMAND, file]);
      expect(run.code).toBe(0);
      expect(run.stdout).not.toContain('Venturi mask, 24 % valve');
      expect(row(run.stdout, 'Venturi mask, 28 % valve')).toBe('O2 at least 4 L/min'); // BTS 2017, Table 4
      expect(row(run.stdout, 'Not stocked')).toBe('CPAP or NIV: no card offers it');
      expect(row(run.stdout, 'Usual Venturi valves not stocked')).toBe('24 %: no card offers it'); // BTS 2017 Table 4 names the 24 % valve
      const view = (JSON.parse((await runCommandLine([...COMMAND, file, '--json'])).stdout) as PolicyView).devices;
      expect(view.usualVenturiValvesNotStocked).toStrictEqual([24]);
      expect(view.venturiValves[0]).toStrictEqual({ fio2Percent: 28, minimumFlowLPerMin: 4 }); // BTS 2017, Table 4
      const cpap = view.kinds.find((k) => k.kind === 'cpap-niv');
      expect(cpap?.stocked).toBe(false);
      expect(cpap?.flowLPerMin).toBeUndefined();
      expect(view.kinds.find((k) => k.kind === 'nasal-cannula')).toMatchObject({ stocked: true, flowLPerMin: { from: 1, to: 6 } }); // BTS 2017, Tables 2 and 4
    });

    it('says Venturi masks are not stocked when no valve is, rather than listing the valves missing', async () => {
      const text = btsText().replace(/^ {2}venturi-mask:\n {4}settings:.*\n( {6}- .*\n)+/m, '');
      const run = await runCommandLine([...COMMAND, writePolicy(text)]);
      expect(run.code).toBe(0);
      expect(row(run.stdout, 'Not stocked')).toBe('Venturi mask: no card offers it');
      expect(run.stdout).not.toContain('Usual Venturi valves not stocked');
    });

    it('shows the TSANZ preset citing BTS 2017 for exactly the rules its clinical basis lists, and the ventilation topic', async () => {
      const run = await runCommandLine([...COMMAND, bundled('based-on-tsanz-2015.yaml')]);
      expect(run.code).toBe(0);
      // policies/based-on-tsanz-2015.yaml clinicalBasis: TSANZ 2015 primary; BTS 2017 for the statements
      // that are BTS 2017's (e.g. pneumothorax at 15 L/min, BTS 2017 Table 2; 24 % Venturi, Table 4).
      expect(row(run.stdout, 'Guidelines followed')).toBe('TSANZ 2015 (primary), BTS 2017, BTS/ICS 2016');
      const cited = row(run.stdout, 'Cards citing BTS 2017');
      const listed = [...readFileSync(bundled('based-on-tsanz-2015.yaml'), 'utf8').matchAll(/^ {4}([a-z0-9-]+): bts-2017\b/gm)].map((m) => m[1]);
      expect(listed.length).toBeGreaterThan(0);
      expect(cited).toBe(`${listed.length} rules: ${[...listed].sort().join(', ')}`);
      expect(cited).toContain('pneumothorax-oxygen'); // BTS 2017, Table 2
      expect(cited).toContain('uncontrolled-oxygen-at-risk'); // BTS 2017, Table 4
      expect(row(run.stdout, 'Every other card cites')).toBe('TSANZ 2015 (primary)');
      expect(row(run.stdout, 'Ventilation thresholds cite')).toBe('BTS/ICS 2016'); // NIV and invasive ventilation thresholds (BTS/ICS 2016)
      const view = (JSON.parse((await runCommandLine([...COMMAND, bundled('based-on-tsanz-2015.yaml'), '--json'])).stdout) as PolicyView)
        .clinicalBasis;
      expect(view.citedForRules).toStrictEqual([{ key: 'bts-2017', label: 'BTS 2017', ruleIds: [...listed].sort() }]);
      expect(view.guidelines.filter((g) => g.primary)).toStrictEqual([{ key: 'tsanz-2015', label: 'TSANZ 2015', primary: true }]);
      expect(view.topics).toStrictEqual([{ key: 'bts-ics-2016', label: 'BTS/ICS 2016', topic: 'ventilation', setBy: 'policy' }]);
    });

    it('says every card cites the primary when no rule names another, and a rule listed with the primary is not another', async () => {
      const text = btsText().replace(/^ {2}ruleCitations: \{\}.*$/m, '  ruleCitations: { spo2-below-target: bts-2017 }');
      expect(text).toContain('ruleCitations: { spo2-below-target: bts-2017 }');
      const run = await runCommandLine([...COMMAND, writePolicy(text)]);
      expect(run.code).toBe(0);
      expect(row(run.stdout, 'Every card cites')).toBe('BTS 2017 (primary)');
      expect(run.stdout).not.toContain('Cards citing');
    });

    it('shows the card wording folder and the override reasons the policy adds, with per-rule counts', async () => {
      const text = btsText()
        .replace(/^cardWording: \{\}.*$/m, 'cardWording: { folder: ./larkspur-cards }')
        .replace(/^ {2}merge: add .*$/m, '  merge: replace')
        .replace(/^ {2}allCards: \[\].*$/m, '  allCards: [{ code: discussed-with-consultant, display: "Discussed with the consultant on call" }]')
        .replace(
          /^ {2}byRule: \{\}.*$/m,
          '  byRule:\n    target-differs-from-policy:\n      - { code: outreach-agreed-target, display: "Target agreed with outreach" }\n      - { code: palliative-plan, display: "Palliative care plan" }',
        );
      const file = writePolicy(text);
      const run = await runCommandLine([...COMMAND, file]);
      expect(run.code).toBe(0);
      expect(row(run.stdout, 'Local card wording folder')).toBe("./larkspur-cards (from the policy file's folder)");
      expect(row(run.stdout, 'Override reasons merged by')).toBe("replace: instead of the card file's, for a rule the policy gives any");
      expect(row(run.stdout, 'Reasons on every card')).toBe('"Discussed with the consultant on call" (discussed-with-consultant)');
      expect(row(run.stdout, 'Reasons for one rule')).toBe('target-differs-from-policy: 2 reasons');
      const view = JSON.parse((await runCommandLine([...COMMAND, file, '--json'])).stdout) as PolicyView;
      expect(view.cardWording).toStrictEqual({ folder: './larkspur-cards' });
      expect(view.overrideReasons.merge).toBe('replace');
      expect(view.overrideReasons.byRule.map((r) => [r.ruleId, r.count])).toStrictEqual([['target-differs-from-policy', 2]]);
      const bundledRun = await runCommandLine([...COMMAND, bundled('based-on-bts-2017.yaml')]);
      expect(row(bundledRun.stdout, 'Local card wording folder')).toBe('none: the bundled wording for every card');
      expect(row(bundledRun.stdout, 'Reasons on every card')).toBe('none');
      expect(row(bundledRun.stdout, 'Override reasons merged by')).toBe("add: after each card file's own reasons");
    });
  });

  describe('edge cases', () => {
    it('refuses an invalid file with exit 2, as policy validate does, naming each problem and pointing to policy validate', async () => {
      const file = writePolicy(btsText().replace('lowPercent: 94', 'lowPercent: 99'));
      const run = await runCommandLine([...COMMAND, file]);
      expect(run.code).toBe(2);
      expect(run.stdout).toBe('');
      expect(run.stderr).toContain(`${file} is not valid; run policy validate ${file} for the fixes`);
      expect(run.stderr).toMatch(/: targets\.standard: the range 99–98 % is not ordered/);
    });

    it('answers a missing file with exit 1 and a usage slip with exit 2', async () => {
      expect((await runCommandLine([...COMMAND, '/nonexistent/larkspur-bay.yaml'])).code).toBe(1);
      expect((await runCommandLine([...COMMAND])).code).toBe(2);
      expect((await runCommandLine([...COMMAND, bundled('based-on-bts-2017.yaml'), '--unit', ' '])).code).toBe(2);
      expect((await runCommandLine([...COMMAND, bundled('based-on-bts-2017.yaml'), '--ward', 'ICU'])).code).toBe(2);
    });
  });
});
