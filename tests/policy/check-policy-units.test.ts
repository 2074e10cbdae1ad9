import { describe, expect, it } from 'vitest';
import { parsePolicyText, type PolicyParse, type PolicyProblem } from '../../src/policy/parse-policy.js';
import { policyWith } from './support/policy-sections.js';

// Unit overrides and effectiveFrom in the policy file. Line and column numbers were counted by hand
// from the lines each test writes at the top of its file (src/policy/locate.ts: the key or list item
// at fault). Ranges are those of the invented Larkspur Bay General Hospital; each cites its source.

function problems(result: PolicyParse): readonly PolicyProblem[] {
  return result.kind === 'invalid' ? result.problems : [];
}

function at(list: readonly PolicyProblem[], path: string): PolicyProblem {
  const found = list.find((p) => p.path === path);
  if (found === undefined) throw new Error(`no problem at ${path}; got ${list.map((p) => p.path).join(', ')}`);
  return found;
}

/** A policy with the BTS 2017 ranges (the test sections) and `units` written first. */
const withUnits = (lines: readonly string[]): PolicyParse => parsePolicyText(policyWith(['units:', ...lines]));

describe('unit overrides in the policy file', () => {
  it('accepts an ICU on 92-96 % and an HDU on 90-94 % with its own at-risk range, and carries them in file order', () => {
    const result = withUnits([
      '  - name: ICU',
      '    match: { names: ["Larkspur Bay General Hospital, Intensive Care Unit"], locations: [Location/lbgh-icu] }',
      '    targets: { standard: { lowPercent: 92, highPercent: 96 } }', // PILOT 2022 intermediate arm
      '  - name: HDU',
      '    match: { patterns: ["*High Dependency*"] }',
      // ICU-ROX 2020 lower limit 90 %; ICONIC 2023 upper bound 94 %. The at-risk range must then stop at
      // 90 %: BTS 2017 Table 4's floor of 88 %, its ceiling at the unit's lower bound (local choice).
      '    targets: { standard: { lowPercent: 90, highPercent: 94 }, hypercapnicRisk: { lowPercent: 88, highPercent: 90 } }',
    ]);
    expect(problems(result)).toStrictEqual([]);
    expect(result.warnings).toStrictEqual([]);
    if (result.kind !== 'ok') throw new Error('invalid');
    expect(result.policy.units).toStrictEqual([
      {
        name: 'ICU',
        match: { names: ['Larkspur Bay General Hospital, Intensive Care Unit'], patterns: [], locations: ['Location/lbgh-icu'] },
        targets: { standard: { lowPercent: 92, highPercent: 96 }, hypercapnicRisk: undefined },
        basisKey: undefined,
      },
      {
        name: 'HDU',
        match: { names: [], patterns: ['*High Dependency*'], locations: [] },
        targets: { standard: { lowPercent: 90, highPercent: 94 }, hypercapnicRisk: { lowPercent: 88, highPercent: 90 } },
        basisKey: undefined,
      },
    ]);
  });

  it('reads a policy written before units and effectiveFrom as it was: no unit overrides, no date', () => {
    const result = parsePolicyText(policyWith([]));
    if (result.kind !== 'ok') throw new Error('invalid');
    expect(result.policy.units).toStrictEqual([]);
    expect(result.policy.effectiveFrom).toBeUndefined();
  });

  it("checks each unit's effective ranges as the policy's own, at the unit's path", () => {
    const result = withUnits([
      '  - name: ICU',
      '    match: { names: [Intensive Care Unit] }',
      '    targets:',
      '      standard: { lowPercent: 90, highPercent: 94 }', // below the at-risk range's top of 92 %: refused
      '  - name: HDU',
      '    match: { names: [High Dependency Unit] }',
      '    targets:',
      '      standard: { lowPercent: 96, highPercent: 94 }', // not ordered
      '  - name: Burns',
      '    match: { names: [Burns Unit] }',
      '    targets:',
      '      hypercapnicRisk: { lowPercent: 82, highPercent: 86 }', // starts below the critical 85 % (BTS 2017, Table 2)
    ]);
    const list = problems(result);
    const icu = at(list, 'units.0.targets.standard');
    expect(icu).toMatchObject({ line: 5, column: 7 });
    expect(icu.message).toBe(
      "on unit 'ICU', the at-risk range 88–92 % reaches above the lower bound of the standard range 90–94 %: " +
        'a patient at risk of hypercapnic respiratory failure would be given more oxygen than the range for patients not at risk allows',
    );
    expect(icu.fix).toContain(
      'give the unit its own at-risk range ending at or below 90 % (units.0.targets.hypercapnicRisk), or raise units.0.targets.standard.lowPercent to 92',
    );
    // A unit whose whole range sits inside the at-risk range: raising its floor would leave no range.
    const narrow = problems(
      withUnits(['  - name: Recovery', '    match: { names: [Recovery] }', '    targets:', '      standard: { lowPercent: 89, highPercent: 92 }']),
    );
    const recovery = at(narrow, 'units.0.targets.standard');
    expect(recovery.fix).toContain('give the unit its own at-risk range ending at or below 89 %');
    expect(recovery.fix).not.toContain('or raise');
    expect(at(list, 'units.1.targets.standard')).toMatchObject({
      line: 9,
      message: "on unit 'HDU', the range 96–94 % is not ordered: lowPercent must be below highPercent",
    });
    const burns = at(list, 'units.2.targets.hypercapnicRisk.lowPercent');
    expect(burns).toMatchObject({ line: 13, column: 26 });
    expect(burns.message).toContain("on unit 'Burns', units.2.targets.hypercapnicRisk starts at 82 %, below the critical threshold 85 %");
    // The policy's own ranges are sound, so nothing is reported at targets.* or at the threshold.
    expect(list.filter((p) => !p.path.startsWith('units.'))).toStrictEqual([]);
  });

  it('reports a fault in the policy ranges once, at the policy key, not again on each unit', () => {
    const result = parsePolicyText(
      policyWith(
        [
          'targets:',
          '  standard: { lowPercent: 98, highPercent: 94 }', // BTS 2017 Tables 1-3 bounds, swapped: refused
          '  hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', // BTS 2017, Table 4
          '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }', // BTS 2017, Table 3 (V2)
          'units:',
          // Sets only its at-risk range (invented), so the policy's swapped standard range applies on it too.
          '  - { name: HDU, match: { names: [HDU] }, targets: { hypercapnicRisk: { lowPercent: 86, highPercent: 90 } } }',
          '  - { name: ICU, match: { names: [ICU] }, targets: { standard: { lowPercent: 99, highPercent: 95 } } }', // swapped: refused
        ],
        'targets',
      ),
    );
    expect(problems(result).map((p) => p.path)).toStrictEqual(['targets.standard', 'units.1.targets.standard']);
  });

  it('refuses two units that claim the same exact name or location, and two units of one name', () => {
    const result = withUnits([
      '  - name: ICU',
      '    match: { names: [Intensive Care Unit], locations: [Location/lbgh-icu] }',
      '    targets: { standard: { lowPercent: 92, highPercent: 96 } }', // PILOT 2022 intermediate arm
      '  - name: icu',
      '    match: { names: ["  intensive care   unit"], locations: [Location/lbgh-icu] }',
      '    targets: { standard: { lowPercent: 92, highPercent: 96 } }', // PILOT 2022 intermediate arm
    ]);
    const list = problems(result);
    expect(list.map((p) => p.path)).toStrictEqual(['units.1.name', 'units.1.match.names.0', 'units.1.match.locations.0']);
    expect(at(list, 'units.1.match.names.0').message).toBe(
      "'  intensive care   unit' is also matched by units.0, listed first, so this entry would never apply",
    );
  });

  it('refuses a unit that matches nothing, sets nothing, sets the oxygen-toxicity range or cites an unknown source', () => {
    const result = withUnits([
      '  - name: ICU',
      '    match: {}',
      '    targets: {}',
      '  - name: HDU',
      '    match: { names: [HDU] }',
      '    targets: { oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 } }', // BTS 2017 Table 3: not a unit's to set
      '    basis: pilot-2022',
    ]);
    const list = problems(result);
    expect(at(list, 'units.0.match').message).toBe('matches no location: give at least one of names, patterns or locations');
    expect(at(list, 'units.0.targets').message).toBe('sets no range: give standard, hypercapnicRisk or both');
    expect(at(list, 'units.1.targets.oxygenToxicityRisk').message).toBe("unknown key 'oxygenToxicityRisk'");
    expect(at(list, 'units.1.basis').message).toBe("'pilot-2022' is not a key of references");
  });
});

describe('effectiveFrom in the policy file', () => {
  it('accepts an ISO date and refuses anything else, at its line', () => {
    const ok = parsePolicyText(policyWith(['effectiveFrom: 2027-03-01']));
    expect(ok.kind === 'ok' ? ok.policy.effectiveFrom : undefined).toBe('2027-03-01');
    for (const written of ['2027-02-30', '1 March 2027', '2027-03-01T00:00:00Z']) {
      const list = problems(parsePolicyText(policyWith([`effectiveFrom: "${written}"`])));
      expect(at(list, 'effectiveFrom')).toMatchObject({ line: 1, column: 1 });
    }
  });
});
