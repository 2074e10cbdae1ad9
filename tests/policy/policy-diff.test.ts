import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parsePolicyText } from '../../src/policy/parse-policy.js';
import { diffPolicies, policyDiffText, type PolicyChange, type PolicyVersion } from '../../src/policy/policy-diff.js';

const preset = (name: string): string => readFileSync(new URL(`../../policies/${name}`, import.meta.url), 'utf8');
const BTS = preset('based-on-bts-2017.yaml');

function version(text: string): PolicyVersion {
  const parsed = parsePolicyText(text);
  if (parsed.kind !== 'ok') throw new Error(`test policy not valid: ${JSON.stringify(parsed.problems)}`);
  return { policy: parsed.policy, acknowledgements: parsed.acknowledgements, contentHash: createHash('sha256').update(text).digest('hex') };
}

/** The bundled BTS 2017 preset with lines replaced; each replaced text must be there. */
function edited(...edits: readonly (readonly [string, string])[]): string {
  return edits.reduce((text, [from, to]) => {
    expect(text).toContain(from);
    return text.replace(from, to);
  }, BTS);
}

const only = (changes: readonly PolicyChange[]): PolicyChange => {
  expect(changes).toHaveLength(1);
  return changes[0] as PolicyChange;
};

describe('diffPolicies', () => {
  it('finds no clinical change between a policy and itself, nor when only comments and the version differ, but reports the hash', () => {
    const same = diffPolicies(version(BTS), version(BTS));
    expect(same.changes).toStrictEqual([]);
    expect(same.identity).toStrictEqual([]);
    const recommented = edited(['version: "1.0.0"', 'version: "1.0.1"'], ['# Bundled default', '# Reviewed 2026-11-20. Bundled default']);
    const diff = diffPolicies(version(BTS), version(recommented));
    expect(diff.changes).toStrictEqual([]);
    expect(diff.identity.map((c) => c.path)).toStrictEqual(['version', '(content hash)']);
    const text = policyDiffText(diff);
    expect(text).toContain('version: 1.0.0 → 1.0.1');
    expect(text).toMatch(/content hash: [0-9a-f]{12} → [0-9a-f]{12}/);
    expect(text.trimEnd().endsWith('No clinical change.')).toBe(true);
  });

  it('compares the two presets: the BTS 2017 standard range against the TSANZ 2015 one, at-risk range the same', () => {
    const diff = diffPolicies(version(BTS), version(preset('based-on-tsanz-2015.yaml')));
    const ranges = diff.changes.filter((c) => c.heading === 'Target ranges');
    // BTS 2017 Tables 1-3: 94-98 %; TSANZ 2015: 92-96 %. Both use 88-92 % at risk of hypercapnia
    // (BTS 2017 Table 4; TSANZ 2015), so that range does not appear.
    expect(only(ranges).text).toBe('standard target (patients not at risk of hypercapnia): 94–98 % → 92–96 % (both bounds 2 points lower)');
    expect(diff.changes.some((c) => c.path.startsWith('targets.hypercapnicRisk'))).toBe(false);
    expect(diff.changes.find((c) => c.heading === 'Basis and site')?.text).toBe(
      "guideline the policy is based on: 'bts-2017' (BTS 2017) → 'tsanz-2015' (TSANZ 2015)",
    );
    // The TSANZ preset switches off the UK early-warning rule (its comment says why).
    expect(only(diff.changes.filter((c) => c.heading === 'Rules and indicators')).text).toBe('switched off: news2-scale-2 (its cards: info by default)');
    expect(diff.identity.map((c) => c.path)).toStrictEqual(['id', 'title', '(content hash)']);
  });

  describe('each kind of change, under its heading and with its units', () => {
    it.each([
      // [what, edit, heading, text]
      [
        'the standard floor raised',
        ['standard: { lowPercent: 94, highPercent: 98 }', 'standard: { lowPercent: 95, highPercent: 98 }'], // from BTS 2017 Tables 1-3
        'Target ranges',
        'standard target (patients not at risk of hypercapnia): 94–98 % → 95–98 % (lower bound 1 point higher, upper bound unchanged)',
      ],
      [
        'the at-risk range moved',
        ['hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', 'hypercapnicRisk: { lowPercent: 86, highPercent: 90 }'], // from BTS 2017 Table 4
        'Target ranges',
        'target at risk of hypercapnic respiratory failure: 88–92 % → 86–90 % (both bounds 2 points lower)',
      ],
      [
        'the oxygen toxicity range moved',
        ['oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', 'oxygenToxicityRisk: { lowPercent: 85, highPercent: 90 }'], // from BTS 2017 Table 3
        'Target ranges',
        'target at risk of oxygen toxicity (paraquat, bleomycin): 85–88 % → 85–90 % (lower bound unchanged, upper bound 2 points higher)',
      ],
      [
        'the critical threshold lowered',
        ['criticalSpo2BelowPercent: 85', 'criticalSpo2BelowPercent: 84'], // from BTS 2017 Table 2: below 85 %
        'Thresholds',
        'critical SpO2: below 85 % → below 84 %',
      ],
      [
        'a pressure threshold in another unit',
        ['nivPaco2Above: { value: 6.5, unit: kPa }', "nivPaco2Above: { value: 45, unit: 'mm[Hg]' }"], // from BTS/ICS 2016: 6.5 kPa
        'Thresholds',
        'consider NIV: PaCO2 above 6.5 kPa → PaCO2 above 45 mmHg',
      ],
      [
        'a pH threshold',
        ['invasiveVentilationPhBelow: 7.25', 'invasiveVentilationPhBelow: 7.2'], // from BTS/ICS 2016: 7.25
        'Thresholds',
        'consider invasive ventilation: pH below 7.25 → pH below 7.2',
      ],
      [
        'a window in minutes',
        ['repeatGasMinutes: { from: 30, to: 60 }', 'repeatGasMinutes: { from: 30, to: 45 }'], // from BTS 2017 Tables 2-4
        'Thresholds',
        'repeat blood gas after a change, within: 30–60 min → 30–45 min',
      ],
      [
        'a freshness window',
        ['bloodGasMinutes: 720', 'bloodGasMinutes: 360'], // from the preset (local choice)
        'Freshness windows',
        'a blood gas counts as current for: 720 min → 360 min',
      ],
      [
        'a risk condition removed',
        ['    - morbid-obesity\n', ''], // BTS 2017 Table 4 lists morbid obesity
        'Who is at risk of hypercapnic respiratory failure',
        "risk condition removed: 'morbid-obesity'",
      ],
      [
        'a risk condition added',
        ['    - copd\n', '    - copd\n    - acute-asthma\n'], // not in BTS 2017 Table 4 (validation warns)
        'Who is at risk of hypercapnic respiratory failure',
        "risk condition added: 'acute-asthma'",
      ],
      [
        'the hypercapnia PaCO2 threshold',
        ['hypercapniaPaco2AtLeast: { value: 6.0, unit: kPa }', 'hypercapniaPaco2AtLeast: { value: 6.5, unit: kPa }'], // from BTS 2017 clarification: 6 kPa
        'Who is at risk of hypercapnic respiratory failure',
        'hypercapnia: PaCO2 at or above 6 kPa → PaCO2 at or above 6.5 kPa',
      ],
      [
        'the minimum age',
        ['minimumAgeYears: 16', 'minimumAgeYears: 18'], // common practice: 16
        'Population',
        'minimum age for adult advice: 16 years → 18 years',
      ],
      [
        'a special condition removed',
        ['    - hyperventilation\n', ''], // BTS 2017 Table 3
        'Special conditions',
        "oxygen only if hypoxaemic removed: 'hyperventilation'",
      ],
      [
        'the site altitude',
        ['altitudeM: 40 ', 'altitudeM: 1200 '], // invented site values
        'Basis and site',
        'site altitude: 40 m → 1200 m',
      ],
      [
        'the time zone',
        ['timeZone: Europe/London ', 'timeZone: Australia/Perth '],
        'Basis and site',
        "time zone: 'Europe/London' → 'Australia/Perth'",
      ],
      [
        'a rule switched off',
        ['disabledRules: []', 'disabledRules: [news2-scale-2]'],
        'Rules and indicators',
        'switched off: news2-scale-2 (its cards: info by default)', // its default, info, from its rule (src/core/rules)
      ],
      [
        'an indicator raised',
        ['severity: {}', 'severity: { news2-scale-2: critical }'], // its default, info, from its rule (src/core/rules)
        'Rules and indicators',
        'indicator of news2-scale-2 raised: info → critical',
      ],
      [
        'a titration review setting (no wording of its own: named by its path, unit from its name)',
        ['lookbackHours: 8 ', 'lookbackHours: 12 '], // common practice: one nursing shift
        'Titration review',
        'changed: titrationReview.lookbackHours: 8 h → 12 h',
      ],
      [
        'a caution line added',
        ['more: []', 'more: ["Call critical care outreach on 4444."]'],
        'References and cautions',
        "caution line added: 'Call critical care outreach on 4444.'",
      ],
    ] as const)('%s', (_what, [from, to], heading, text) => {
      const change = only(diffPolicies(version(BTS), version(edited([from, to]))).changes);
      expect(change.heading).toBe(heading);
      expect(change.text).toBe(text);
    });

    it('reads an indicator change against the rule default, and an acknowledgement added with it', () => {
      const lowered = edited([
        'severity: {}',
        'severity: { acute-hypercapnic-acidosis: info }\n' +
          'acknowledgements:\n  - { ruleId: acute-hypercapnic-acidosis, change: lowered, reason: "Outreach reviews every gas within 15 minutes", by: Oxygen committee }',
      ]).replace('acknowledgements: []', '');
      const diff = diffPolicies(version(BTS), version(lowered));
      // acute-hypercapnic-acidosis is critical by default (docs/clinical-basis.md).
      expect(diff.changes.map((c) => c.text)).toStrictEqual([
        'indicator of acute-hypercapnic-acidosis lowered: critical → info; acknowledged',
        'added: acute-hypercapnic-acidosis lowered: Outreach reviews every gas within 15 minutes; by Oxygen committee',
      ]);
      const back = diffPolicies(version(lowered), version(BTS));
      expect(back.changes.map((c) => c.text)).toStrictEqual([
        'indicator of acute-hypercapnic-acidosis raised: info → critical, back to its default',
        'removed: acute-hypercapnic-acidosis lowered: Outreach reviews every gas within 15 minutes; by Oxygen committee',
      ]);
    });

    it('says a rule switched back on, the reverse of switched off', () => {
      const off = edited(['disabledRules: []', 'disabledRules: [news2-scale-2]']);
      expect(only(diffPolicies(version(off), version(BTS)).changes).text).toBe('switched back on: news2-scale-2 (its cards: info by default)');
    });

    it('says when a rule that is critical by default is switched off with the acknowledgement the file records', () => {
      const off = edited(
        ['disabledRules: []', 'disabledRules: [escalated-support-failing]'],
        ['acknowledgements: []', 'acknowledgements: [{ ruleId: escalated-support-failing, change: disabled, reason: "Outreach reviews every patient on high flow hourly" }]'],
      );
      // escalated-support-failing is critical by default (docs/policy.md, Validation).
      expect(diffPolicies(version(BTS), version(off)).changes.map((c) => c.text)).toStrictEqual([
        'switched off: escalated-support-failing (its cards: critical by default); acknowledged',
        'added: escalated-support-failing disabled: Outreach reviews every patient on high flow hourly',
      ]);
    });

    it('calls a pressure rewritten in another unit at the same value the same pressure', () => {
      // 6.5 kPa is 48.75 mmHg (1 kPa = 7.50062 mmHg, UCUM); 45 mmHg is not the same threshold.
      const same = edited(['nivPaco2Above: { value: 6.5, unit: kPa }', "nivPaco2Above: { value: 48.75, unit: 'mm[Hg]' }"]);
      expect(only(diffPolicies(version(BTS), version(same)).changes).text).toBe(
        'consider NIV: PaCO2 above 6.5 kPa → PaCO2 above 48.75 mmHg (the same pressure, written differently)',
      );
      const lower = edited(['nivPaco2Above: { value: 6.5, unit: kPa }', "nivPaco2Above: { value: 45, unit: 'mm[Hg]' }"]);
      expect(only(diffPolicies(version(BTS), version(lower)).changes).text).not.toContain('the same pressure');
    });
  });

  describe('sections without wording of their own (added to the format later)', () => {
    const base = version(BTS);
    const withSections = (extra: Record<string, unknown>): PolicyVersion => ({ policy: { ...base.policy, ...extra } });

    it('shows a change inside a list of named entries by the entry name and path', () => {
      const icu = (low: number, high: number): Record<string, unknown> => ({
        unitOverrides: [
          { name: 'Larkspur ICU', locations: ['ICU'], targets: { standard: { lowPercent: low, highPercent: high } } },
          { name: 'Larkspur HDU', locations: ['HDU'], targets: { standard: { lowPercent: 92, highPercent: 96 } } },
        ],
      });
      // ICU example values: 92-96 % and 90-94 %, as the unit-override example gives them (invented site).
      const change = only(diffPolicies(withSections(icu(92, 96)), withSections(icu(90, 94))).changes);
      expect(change.heading).toBe('Other changes');
      expect(change.text).toBe('changed: unitOverrides[name=Larkspur ICU].targets.standard: 92–96 % → 90–94 %');
    });

    it('shows a section added or removed whole, and a nested value changed, with the unit its name carries', () => {
      const devices = { bedsideKit: { venturi: { minimumFlowLPerMin: { '24': 2, '28': 4 } } } };
      const added = only(diffPolicies(base, withSections(devices)).changes);
      expect(added.kind).toBe('added');
      expect(added.text).toBe('added: bedsideKit: {"venturi":{"minimumFlowLPerMin":{"24":2,"28":4}}}');
      expect(only(diffPolicies(withSections(devices), base).changes).kind).toBe('removed');
      const changed = { bedsideKit: { venturi: { minimumFlowLPerMin: { '24': 2, '28': 6 } } } };
      expect(only(diffPolicies(withSections(devices), withSections(changed)).changes).text).toBe(
        'changed: bedsideKit.venturi.minimumFlowLPerMin.28: 4 L/min → 6 L/min',
      );
    });

    it('shows items added to and removed from a list of plain values', () => {
      const reasons = (...r: string[]): PolicyVersion => withSections({ overrideReasons: r });
      const diff = diffPolicies(reasons('Palliative care', 'Patient declined'), reasons('Palliative care', 'Senior review done'));
      expect(diff.changes.map((c) => c.text)).toStrictEqual(["removed: overrideReasons: 'Patient declined'", "added: overrideReasons: 'Senior review done'"]);
    });
  });
});
