import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { RULES } from '../../src/core/rules/index.js';
import { parsePolicyObject, parsePolicyText, type PolicyParse, type PolicyProblem } from '../../src/policy/parse-policy.js';
import { SOMETIMES_CRITICAL_RULE_IDS } from '../../src/policy/rule-ids.js';
import { policyWith } from './support/policy-sections.js';

// Line and column numbers below were counted by hand from the lines each test writes at the top of its
// file (line 1 is the first line written). The convention (src/policy/locate.ts): the position of the
// key, or list item, at fault.

function problems(result: PolicyParse): readonly PolicyProblem[] {
  return result.kind === 'invalid' ? result.problems : [];
}

function at(list: readonly PolicyProblem[], path: string): PolicyProblem {
  const found = list.find((p) => p.path === path);
  if (found === undefined) throw new Error(`no problem at ${path}; got ${list.map((p) => p.path).join(', ')}`);
  return found;
}

const TARGETS_BTS = [
  'targets:',
  '  standard: { lowPercent: 94, highPercent: 98 }', // BTS 2017, Tables 1-3
  '  hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', // BTS 2017, Table 4
  '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', // BTS 2017, Table 3 (V2)
];

describe('the bundled policies', () => {
  it.each(['based-on-bts-2017.yaml', 'based-on-tsanz-2015.yaml'])('%s validates with no error and no warning', (name) => {
    const result = parsePolicyText(readFileSync(new URL(`../../policies/${name}`, import.meta.url), 'utf8'));
    expect(result.kind).toBe('ok');
    expect(problems(result)).toStrictEqual([]);
    expect(result.warnings).toStrictEqual([]);
  });

  it('the small test policy validates, so each test below changes one thing only', () => {
    const result = parsePolicyText(policyWith([]));
    expect(problems(result)).toStrictEqual([]);
    expect(result.kind).toBe('ok');
  });
});

describe('target ranges', () => {
  it('refuses an at-risk range of 96-99 % with a standard range of 80-100 % (tried as a new user)', () => {
    const result = parsePolicyText(
      policyWith(
        [
          'targets:',
          '  standard: { lowPercent: 80, highPercent: 100 }',
          '  hypercapnicRisk: { lowPercent: 96, highPercent: 99 }',
          '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }',
        ],
        'targets',
      ),
    );
    expect(result.kind).toBe('invalid');
    const atRisk = at(problems(result), 'targets.hypercapnicRisk');
    expect([atRisk.line, atRisk.column]).toStrictEqual([3, 3]);
    expect(atRisk.message).toContain('the at-risk range 96–99 % reaches above the lower bound of the standard range 80–100 %');
    expect(atRisk.fix).toContain('at or below targets.standard.lowPercent (80)');
    // The critical threshold of 85 % (BTS 2017 Table 2) now sits inside the 80-100 % standard range.
    // Written after the 4 target lines: header 5-9, site 10-12, hypercapnicRisk 13-17, freshness 18-22,
    // thresholds from 23, criticalSpo2BelowPercent its 6th line: 28.
    const critical = at(problems(result), 'thresholds.criticalSpo2BelowPercent');
    expect([critical.line, critical.column]).toStrictEqual([28, 3]);
    expect(critical.message).toContain('targets.standard starts at 80 %');
  });

  it('lets the at-risk range meet the standard range at one value but not overlap it', () => {
    const touching = [
      'targets:',
      '  standard: { lowPercent: 92, highPercent: 96 }', // TSANZ 2015
      '  hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', // TSANZ 2015
      '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', // BTS 2017, Table 3 (V2)
    ];
    expect(parsePolicyText(policyWith(touching, 'targets')).kind).toBe('ok');
    // One point of overlap: 93 % would be above the standard range's floor (invented, for the edge)
    const overlapping = touching.map((line) => line.replace('highPercent: 92', 'highPercent: 93'));
    const result = parsePolicyText(policyWith(overlapping, 'targets'));
    expect(problems(result).map((p) => [p.path, p.line, p.column])).toStrictEqual([['targets.hypercapnicRisk', 3, 3]]);
  });

  it('refuses a range whose bounds are the wrong way round, at the range', () => {
    const lines = TARGETS_BTS.map((line) => line.replace('lowPercent: 94, highPercent: 98', 'lowPercent: 98, highPercent: 94'));
    const result = parsePolicyText(policyWith(lines, 'targets'));
    const standard = at(problems(result), 'targets.standard');
    expect([standard.line, standard.column]).toStrictEqual([2, 3]);
    expect(standard.message).toBe('the range 98–94 % is not ordered: lowPercent must be below highPercent');
  });

  it('refuses a bound outside 70-100 %, at the bound itself', () => {
    // ISO 80601-2-61: oximeter accuracy is stated over SaO2 70-100 %
    const lines = TARGETS_BTS.map((line) =>
      line.replace('lowPercent: 88, highPercent: 92', 'lowPercent: 65, highPercent: 92').replace('highPercent: 98', 'highPercent: 101'),
    );
    const list = problems(parsePolicyText(policyWith(lines, 'targets')));
    // '  hypercapnicRisk: { lowPercent' : two spaces, 15 letters, ': { ' -> lowPercent at column 22
    const low = at(list, 'targets.hypercapnicRisk.lowPercent');
    expect([low.line, low.column]).toStrictEqual([3, 22]);
    expect(low.message).toContain('is 65');
    expect(low.fix).toBe('use a value of at least 70');
    // '  standard: { lowPercent: 94, highPercent' : highPercent at column 31
    const high = at(list, 'targets.standard.highPercent');
    expect([high.line, high.column]).toStrictEqual([2, 31]);
    expect(high.fix).toBe('use a value of at most 100');
  });
});

describe('the critical SpO2 threshold', () => {
  const thresholds = (critical: number): string[] => [
    'thresholds:',
    '  acidosisPhBelow: 7.35', // RCEM normal range 7.35-7.45
    '  nivPhBelow: 7.35', // BTS/ICS 2016
    '  nivPaco2Above: { value: 6.5, unit: kPa }', // BTS/ICS 2016
    '  invasiveVentilationPhBelow: 7.25', // BTS/ICS 2016
    `  criticalSpo2BelowPercent: ${critical}`,
    '  criticalPointsBelowTarget: 4', // local choice
    '  highOxygenFio2AtLeast: 0.40', // from memory
    '  venturiTachypnoeaRespRateAbove: 30', // BTS 2017, Table 4
    '  venturiTachypnoeaFlowMultiplier: 1.5', // BTS 2017, Table 4
    '  clusterHeadacheFlowLPerMin: { from: 12, to: 15 }', // BTS 2017 (V2)
    '  pneumothoraxFlowLPerMin: 15', // BTS 2017, Table 2
    '  nasalCannulaStepDownLPerMin: 1', // common practice
    '  repeatGasMinutes: { from: 30, to: 60 }', // BTS 2017, Tables 2-4
  ];

  it('may equal the lowest lower bound: below 85 % critical, paraquat range from 85 % (BTS 2017 Tables 2 and 3)', () => {
    expect(parsePolicyText(policyWith(thresholds(85), 'thresholds')).kind).toBe('ok');
  });

  it.each([
    [86, ['targets.oxygenToxicityRisk starts at 85 %']],
    [90, ['targets.hypercapnicRisk starts at 88 %', 'targets.oxygenToxicityRisk starts at 85 %']],
    [95, ['targets.standard starts at 94 %', 'targets.hypercapnicRisk starts at 88 %', 'targets.oxygenToxicityRisk starts at 85 %']],
  ])('refuses %i %%, above a lower bound, naming every range it cuts into', (critical, ranges) => {
    const result = parsePolicyText(policyWith(thresholds(critical), 'thresholds'));
    const problem = at(problems(result), 'thresholds.criticalSpo2BelowPercent');
    expect([problem.line, problem.column]).toStrictEqual([6, 3]);
    for (const words of ranges) expect(problem.message).toContain(words);
    // BTS 2017 ranges: the lowest lower bound is the paraquat range's 85 %
    expect(problem.fix).toContain('at or below the lowest lower bound, 85 %');
  });

  it('names an unknown key and suggests the key it was meant to be', () => {
    const lines = thresholds(85).map((line) => line.replace('criticalSpo2BelowPercent', 'criticalSpo2Below'));
    const list = problems(parsePolicyText(policyWith(lines, 'thresholds')));
    const unknown = at(list, 'thresholds.criticalSpo2Below');
    expect([unknown.line, unknown.column, unknown.message]).toStrictEqual([6, 3, "unknown key 'criticalSpo2Below'"]);
    expect(unknown.fix).toContain("did you mean 'criticalSpo2BelowPercent'?");
    // A missing key is reported at its parent key, `thresholds:` on line 1.
    const missing = at(list, 'thresholds.criticalSpo2BelowPercent');
    expect([missing.line, missing.column, missing.message]).toStrictEqual([1, 1, 'is missing']);
  });
});

describe('the format', () => {
  it('suggests the key meant inside a section that has defaults', () => {
    const result = parsePolicyText(policyWith(['titrationReview:', '  lookbackHour: 8']));
    const unknown = at(problems(result), 'titrationReview.lookbackHour');
    expect([unknown.line, unknown.column]).toStrictEqual([2, 3]);
    expect(unknown.fix).toContain("did you mean 'lookbackHours'?");
  });

  it('suggests the accepted value nearest a misspelt one', () => {
    const lines = [
      'acknowledgements:',
      '  - { ruleId: spo2-below-target, change: lowerd, reason: "Early-warning escalation covers these patients" }',
    ];
    const problem = at(problems(parsePolicyText(policyWith(lines))), 'acknowledgements.0.change');
    // '  - { ruleId: spo2-below-target, ' is 33 characters: change at column 34
    expect([problem.line, problem.column, problem.fix]).toStrictEqual([2, 34, "did you mean 'lowered'?"]);
  });
});

describe('rule ids', () => {
  it('refuses a misspelt rule id in the disabled list, suggesting the real one (tried as a new user)', () => {
    const result = parsePolicyText(policyWith(['disabledRules:', '  - news2-scale2'], 'disabledRules'));
    const problem = at(problems(result), 'disabledRules.0');
    expect([problem.line, problem.column]).toStrictEqual([2, 5]);
    expect(problem.message).toBe("'news2-scale2' is not a rule id, so this entry would change nothing");
    expect(problem.fix).toContain("did you mean 'news2-scale-2'?");
  });

  it('refuses a misspelt rule id in the severity map (tried as a new user)', () => {
    const result = parsePolicyText(policyWith(['severity:', '  spo2-below-targt: critical'], 'severity'));
    const problem = at(problems(result), 'severity.spo2-below-targt');
    expect([problem.line, problem.column]).toStrictEqual([2, 3]);
    expect(problem.fix).toContain("did you mean 'spo2-below-target'?");
  });

  it('gives a retired id its own message naming what replaced it (docs/clinical-basis.md, retired ids)', () => {
    // 'disabledRules: [' is 16 characters: the item starts at column 17
    const result = parsePolicyText(policyWith(['disabledRules: [pregnancy-oxygen]'], 'disabledRules'));
    const problem = at(problems(result), 'disabledRules.0');
    expect([problem.line, problem.column]).toStrictEqual([1, 17]);
    expect(problem.message).toContain("'pregnancy-oxygen' is a retired rule id");
    expect(problem.fix).toBe("name 'oxygen-without-hypoxaemia' instead, or remove the entry");
  });

  it('accepts every registered id in both lists when no critical rule is touched', () => {
    const quiet = RULES.filter((rule) => rule.defaultIndicator !== 'critical' && !SOMETIMES_CRITICAL_RULE_IDS.includes(rule.id));
    const result = parsePolicyText(
      policyWith(
        [`disabledRules: [${quiet.map((r) => r.id).join(', ')}]`, `severity: { ${quiet.map((r) => `${r.id}: critical`).join(', ')} }`],
        'disabledRules',
        'severity',
      ),
    );
    expect(problems(result)).toStrictEqual([]);
  });
});

describe('critical rules switched off or lowered', () => {
  const criticalRules = RULES.filter((rule) => rule.defaultIndicator === 'critical').map((rule) => rule.id);

  it('covers the rules whose cards are critical by default', () => {
    // docs/clinical-basis.md gives each of these a critical indicator (acidosis, failing support)
    expect(criticalRules).toContain('acute-hypercapnic-acidosis');
    expect(criticalRules).toContain('escalated-support-failing');
  });

  it.each(criticalRules)('refuses switching %s off without an acknowledgement', (id) => {
    const result = parsePolicyText(policyWith(['disabledRules:', `  - ${id}`], 'disabledRules'));
    const problem = at(problems(result), 'disabledRules.0');
    expect([problem.line, problem.column]).toStrictEqual([2, 5]);
    expect(problem.message).toContain('gives critical cards by default; this file switches it off without a recorded acknowledgement');
  });

  it.each(['info', 'warning'])('refuses the acidosis rule lowered to %s without an acknowledgement (tried as a new user)', (indicator) => {
    const result = parsePolicyText(policyWith(['severity:', `  acute-hypercapnic-acidosis: ${indicator}`], 'severity'));
    const problem = at(problems(result), 'severity.acute-hypercapnic-acidosis');
    expect([problem.line, problem.column]).toStrictEqual([2, 3]);
    expect(problem.message).toContain(`lowers it to ${indicator} without a recorded acknowledgement`);
    expect(problem.fix).toContain('acknowledgements:');
  });

  const acknowledged = [
    'severity:',
    '  acute-hypercapnic-acidosis: info',
    'acknowledgements:',
    '  - ruleId: acute-hypercapnic-acidosis',
    '    change: lowered',
    '    reason: Outreach reviews every gas on the respiratory ward within 15 minutes',
    '    by: Oxygen committee, Larkspur Bay General Hospital',
    '    date: 2026-11-20',
  ];

  it('accepts the acidosis rule lowered to info with an acknowledgement, and returns it', () => {
    const result = parsePolicyText(policyWith(acknowledged, 'severity'));
    expect(problems(result)).toStrictEqual([]);
    expect(result.kind === 'ok' && result.acknowledgements).toStrictEqual([
      {
        ruleId: 'acute-hypercapnic-acidosis',
        change: 'lowered',
        reason: 'Outreach reviews every gas on the respiratory ward within 15 minutes',
        by: 'Oxygen committee, Larkspur Bay General Hospital',
        date: '2026-11-20',
      },
    ]);
    expect(result.warnings).toStrictEqual([]);
  });

  it('does not let an acknowledgement of lowering cover switching the rule off', () => {
    const lines = [...acknowledged.slice(2), 'disabledRules: [acute-hypercapnic-acidosis]'];
    const result = parsePolicyText(policyWith(lines, 'disabledRules'));
    const problem = at(problems(result), 'disabledRules.0');
    expect([problem.line, problem.column]).toStrictEqual([7, 17]);
    const unused = at(result.warnings, 'acknowledgements.0');
    expect([unused.line, unused.column]).toStrictEqual([2, 5]);
    expect(unused.message).toContain('the file makes no such change');
  });

  it('refuses an acknowledgement without a reason in words', () => {
    const lines = acknowledged.map((line) => (line.includes('reason:') ? '    reason: ok' : line));
    const problem = at(problems(parsePolicyText(policyWith(lines, 'severity'))), 'acknowledgements.0.reason');
    expect([problem.line, problem.column]).toStrictEqual([6, 5]);
  });

  it.each(SOMETIMES_CRITICAL_RULE_IDS)('warns, and accepts the file, when %s is switched off or held below critical', (id) => {
    // e.g. spo2-below-target: critical when SpO2 is far below target (docs/clinical-basis.md); a severity
    // entry replaces the indicator of every card, so even its default, warning, hides the critical ones
    const result = parsePolicyText(policyWith(['severity:', `  ${id}: warning`, `disabledRules: [${id}]`], 'severity', 'disabledRules'));
    expect(result.kind).toBe('ok');
    expect(result.warnings.map((w) => [w.path, w.line, w.column])).toStrictEqual([
      [`severity.${id}`, 2, 3],
      ['disabledRules.0', 3, 17],
    ]);
    expect(result.warnings[0]?.message).toContain('which hides those critical cards');
    const acknowledged = parsePolicyText(
      policyWith(
        [
          'severity:',
          `  ${id}: warning`,
          'acknowledgements:',
          `  - { ruleId: ${id}, change: lowered, reason: "Our early-warning escalation already covers these patients" }`,
        ],
        'severity',
      ),
    );
    expect(acknowledged.warnings).toStrictEqual([]);
  });

  it('needs no acknowledgement to raise a critical rule or to keep it critical', () => {
    const result = parsePolicyText(
      policyWith(['severity: { acute-hypercapnic-acidosis: critical, repeat-blood-gas-due: critical }'], 'severity'),
    );
    expect(problems(result)).toStrictEqual([]);
    expect(result.warnings).toStrictEqual([]);
  });
});

describe('hypercapnic-risk conditions', () => {
  const risk = (conditions: readonly string[]): string[] => [
    'hypercapnicRisk:',
    '  conditions:',
    ...conditions.map((c) => `    - ${c}`),
    '  hypercapniaPaco2AtLeast: { value: 6.0, unit: kPa }', // BTS 2017 clarification
    '  chronicBicarbonateAboveMmolPerL: 28', // BTS 2017 (V2)
    '  morbidObesityBmiAbove: 40', // BTS 2017 Table 4 (V2)
  ];

  it('warns, and still accepts the file, when pregnancy is listed as a hypercapnic risk (tried as a new user)', () => {
    const result = parsePolicyText(policyWith(risk(['copd', 'pregnancy']), 'hypercapnicRisk'));
    expect(result.kind).toBe('ok');
    const warning = at(result.warnings, 'hypercapnicRisk.conditions.1');
    expect([warning.line, warning.column]).toStrictEqual([4, 7]);
    expect(warning.message).toContain("'pregnancy' is not known to carry a risk of hypercapnic respiratory failure");
  });

  it.each(['acute-asthma', 'stroke', 'sickle-cell-crisis', 'acute-coronary-syndrome'])(
    'warns of %s, which BTS 2017 Table 4 does not list',
    (kind) => {
      const result = parsePolicyText(policyWith(risk(['copd', kind]), 'hypercapnicRisk'));
      expect(result.warnings.map((w) => w.path)).toStrictEqual(['hypercapnicRisk.conditions.1']);
    },
  );

  it('does not warn of the BTS 2017 Table 4 conditions, previous NIV/IMV or chronic hypercapnic failure', () => {
    // BTS 2017 Table 4; previous NIV/IMV and previous hypercapnic failure: BTS 2017 Tables 2-4
    const known = [
      'copd', 'bronchiectasis', 'cystic-fibrosis', 'neuromuscular-disease', 'chest-wall-deformity', 'morbid-obesity',
      'obesity-hypoventilation', 'chronic-hypercapnic-respiratory-failure', 'previous-niv-or-imv',
    ];
    const result = parsePolicyText(policyWith(risk(known), 'hypercapnicRisk'));
    expect(result.kind).toBe('ok');
    expect(result.warnings).toStrictEqual([]);
  });

  it('calls a kind the service does not know an error, not a warning', () => {
    const result = parsePolicyText(policyWith(risk(['copd', 'asthma']), 'hypercapnicRisk'));
    const problem = at(problems(result), 'hypercapnicRisk.conditions.1');
    expect([problem.line, problem.column]).toStrictEqual([4, 7]);
    expect(problem.fix).toBe("did you mean 'acute-asthma'?");
    expect(result.warnings).toStrictEqual([]);
  });
});

describe('every problem at once', () => {
  it('lists schema errors, dangerous values and warnings together, top to bottom', () => {
    const result = parsePolicyText(
      policyWith(
        [
          'targets:',
          '  standard: { lowPercent: 80, highPercent: 100 }',
          '  hypercapnicRisk: { lowPercent: 96, highPercent: 99 }',
          '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }',
          'disabledRules: [news2-scale2]',
          'severity: { acute-hypercapnic-acidosis: info }',
          'hypercapnicRisk:',
          '  conditions: [copd, pregnancy]',
          '  hypercapniaPaco2AtLeast: { value: 6.0, unit: kPa }',
          '  chronicBicarbonateAboveMmolPerL: 28',
          '  morbidObesityBmiAbove: 40',
          '  bmiUnit: kg/m2',
        ],
        'targets',
        'disabledRules',
        'severity',
        'hypercapnicRisk',
      ),
    );
    expect(result.kind).toBe('invalid');
    // after the 12 lines written: header 13-17, site 18-20, freshness 21-25, thresholds from 26 (critical: 31)
    expect(problems(result).map((p) => [p.line, p.path])).toStrictEqual([
      [3, 'targets.hypercapnicRisk'],
      [5, 'disabledRules.0'],
      [6, 'severity.acute-hypercapnic-acidosis'],
      [12, 'hypercapnicRisk.bmiUnit'],
      [31, 'thresholds.criticalSpo2BelowPercent'],
    ]);
    // '  conditions: [copd, ' is 21 characters: pregnancy starts at column 22
    expect(result.warnings.map((w) => [w.line, w.column, w.path])).toStrictEqual([[8, 22, 'hypercapnicRisk.conditions.1']]);
  });

  it('gives a YAML syntax error its line and column', () => {
    const result = parsePolicyText(
      policyWith(['targets:', '  standard: { lowPercent: 94, highPercent: 98 }', '  standard: { lowPercent: 92, highPercent: 96 }'], 'targets'),
    );
    expect(problems(result).map((p) => [p.path, p.line, p.column, p.message])).toStrictEqual([
      ['(file)', 3, 3, 'Map keys must be unique'],
    ]);
  });

  it('reports paths but no positions for an object given without its text', () => {
    const result = parsePolicyObject({ format: 1 });
    expect(problems(result).length).toBeGreaterThan(5);
    expect(problems(result).every((p) => p.line === undefined && p.column === undefined)).toBe(true);
  });
});

describe('an at-risk range above 88–92 %', () => {
  // BTS 2017 Table 4 and TSANZ 2015 (V2) both give patients at risk of hypercapnic failure 88–92 %: a
  // range reaching above 92 % is a warning wherever it is written, never silent, and never an error.
  const withTargets = (atRisk: string, units: readonly string[] = []): PolicyParse =>
    parsePolicyText(
      policyWith(
        [
          'targets:',
          '  standard: { lowPercent: 94, highPercent: 98 }', // BTS 2017, Tables 1-3
          `  hypercapnicRisk: ${atRisk}`,
          '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', // BTS 2017, Table 3 (V2)
          ...units,
        ],
        'targets',
      ),
    );

  it.each([
    ['{ lowPercent: 88, highPercent: 92 }', false], // BTS 2017, Table 4: the guideline range itself
    ['{ lowPercent: 86, highPercent: 90 }', false], // lower, not higher: not this check's concern
    ['{ lowPercent: 88, highPercent: 93 }', true], // one point above BTS 2017 Table 4's top
    ['{ lowPercent: 90, highPercent: 94 }', true], // meets the standard floor, still above 92 %
  ])('policy at-risk range %s: warned %s', (atRisk, warned) => {
    const result = withTargets(atRisk);
    expect(problems(result)).toStrictEqual([]);
    const warning = result.warnings.find((w) => w.path === 'targets.hypercapnicRisk.highPercent');
    expect(warning !== undefined).toBe(warned);
    if (warned) {
      expect(warning).toMatchObject({ line: 3 });
      expect(warning?.message).toContain('BTS 2017 Table 4 (88–92 %)');
    }
  });

  it("warns of a unit's own at-risk range above 92 %, at the unit's path, and leaves the policy's alone", () => {
    const result = withTargets('{ lowPercent: 88, highPercent: 92 }', [
      'units:',
      '  - name: ICU',
      '    match: { names: [Larkspur Bay General Hospital, Intensive Care Unit] }',
      // PILOT 2022 higher arm 96-100 %; an at-risk range 88-96 % meets its floor but is above BTS 2017 Table 4.
      '    targets: { standard: { lowPercent: 96, highPercent: 100 }, hypercapnicRisk: { lowPercent: 88, highPercent: 96 } }',
    ]);
    expect(problems(result)).toStrictEqual([]);
    expect(result.warnings.map((w) => w.path)).toStrictEqual(['units.0.targets.hypercapnicRisk.highPercent']);
    expect(result.warnings[0]?.message).toContain("on unit 'ICU', the at-risk range 88–96 % reaches above 92 %");
  });
});
