import { describe, expect, it } from 'vitest';
import { matchUnit, policyForUnit, type EncounterLocation } from '../../../src/core/assessment/unit-targets.js';
import { evaluateOrder } from '../../../src/core/engine.js';
import type { Policy, UnitTargets } from '../../../src/core/policy.js';
import type { ConditionKind, Facts, SaturationRange } from '../../../src/core/types.js';
import {
  BTS,
  NOW,
  bloodGas,
  buildFacts,
  condition,
  fio2,
  oxygenOrder,
  spo2,
  withPolicy,
} from '../facts-builder.js';

/**
 * Unit overrides at the invented Larkspur Bay General Hospital: the ICU agrees 92–96 % (PILOT 2022
 * intermediate arm, check-values §1b), the high-dependency unit 90–94 % (ICU-ROX 2020 lower limit 90 %,
 * ICONIC 2023 conservative arm up to 94 %). The wards keep the BTS 2017 ranges.
 */
const ICU_NAME = 'Larkspur Bay General Hospital, Intensive Care Unit';
const WARD_NAME = 'Larkspur Bay General Hospital, Ward 4 (demo)';

function unit(name: string, match: Partial<UnitTargets['match']>, targets: Partial<UnitTargets['targets']>): UnitTargets {
  return {
    name,
    match: { names: [], patterns: [], locations: [], ...match },
    targets: { standard: undefined, hypercapnicRisk: undefined, ...targets },
    basisKey: undefined,
  };
}

const range = (lowPercent: number, highPercent: number): SaturationRange => ({ lowPercent, highPercent });

const icu = unit('ICU', { names: [ICU_NAME], locations: ['Location/lbgh-icu'] }, { standard: range(92, 96) }); // PILOT 2022 intermediate arm
const hdu = unit('HDU', { patterns: ['*high dependency*'] }, { standard: range(90, 94) }); // ICU-ROX 2020 90 %; ICONIC 2023 94 %

const larkspur: Policy = withPolicy(BTS, { units: [icu, hdu] });

const at = (name: string | undefined, ids: readonly string[] = []): EncounterLocation => ({ name, ids });

/** Facts for an invented patient on `unitName`, on 2 L/min nasal cannula, SpO2 95 % on oxygen. */
function patientOn(unitName: string | undefined, kinds: readonly ConditionKind[] = [], extra: Partial<Facts> = {}): Facts {
  return buildFacts({
    encounterUnit: unitName,
    conditions: kinds.map(condition),
    spo2Percent: [spo2(95)],
    ...extra,
  });
}

function targetOf(facts: Facts, policy: Policy = larkspur) {
  return evaluateOrder(facts, policy, { hook: 'order-sign', now: NOW }).assessment.target;
}

describe('matchUnit', () => {
  it('matches an exact name whatever its capitals and spacing', () => {
    for (const written of [ICU_NAME, ICU_NAME.toUpperCase(), `  ${ICU_NAME.replace(', ', ',   ')} `]) {
      const match = matchUnit(larkspur.units, at(written));
      expect(match).toMatchObject({ kind: 'matched', index: 0, matchedBy: `name '${ICU_NAME}'` });
    }
  });

  it('matches a pattern in which * stands for any text, and nothing that merely resembles it', () => {
    expect(matchUnit(larkspur.units, at('Larkspur Bay General Hospital, High Dependency Unit'))).toMatchObject({
      kind: 'matched',
      unit: { name: 'HDU' },
      matchedBy: "pattern '*high dependency*'",
    });
    expect(matchUnit(larkspur.units, at('Larkspur Bay General Hospital, High-Dependency Unit'))).toStrictEqual({
      kind: 'none',
      reason: 'no-match',
    });
    // Regular-expression characters in a pattern are literal: "(demo)" is not a group.
    const literal = [unit('Ward 4', { patterns: ['*Ward 4 (demo)'] }, { standard: range(94, 98) })]; // BTS 2017, Tables 1-3
    expect(matchUnit(literal, at(WARD_NAME)).kind).toBe('matched');
    expect(matchUnit(literal, at('Larkspur Bay General Hospital, Ward 4 demo')).kind).toBe('none');
  });

  it('matches a location reference or identifier when the record gives no name', () => {
    expect(matchUnit(larkspur.units, at(undefined, ['Location/lbgh-icu']))).toMatchObject({
      kind: 'matched',
      unit: { name: 'ICU' },
      matchedBy: "location 'Location/lbgh-icu'",
    });
  });

  describe('edge cases', () => {
    it('says why no unit applies: no units, no location, or no match', () => {
      expect(matchUnit([], at(ICU_NAME))).toStrictEqual({ kind: 'none', reason: 'no-units' });
      expect(matchUnit(larkspur.units, at(undefined))).toStrictEqual({ kind: 'none', reason: 'no-location' });
      expect(matchUnit(larkspur.units, at(WARD_NAME))).toStrictEqual({ kind: 'none', reason: 'no-match' });
    });

    it('lets the first unit listed win when two match, and names the other', () => {
      const critical = unit('Critical care', { patterns: ['*care unit*'] }, { standard: range(90, 94) }); // ICU-ROX 2020; ICONIC 2023
      const both = [critical, icu];
      expect(matchUnit(both, at(ICU_NAME))).toMatchObject({ kind: 'matched', unit: { name: 'Critical care' }, alsoMatched: ['ICU'] });
      expect(matchUnit([icu, critical], at(ICU_NAME))).toMatchObject({ kind: 'matched', unit: { name: 'ICU' }, alsoMatched: ['Critical care'] });
    });
  });
});

describe('policyForUnit', () => {
  it('replaces only the ranges the unit sets, and never the oxygen-toxicity range', () => {
    const match = matchUnit(larkspur.units, at(ICU_NAME));
    expect(policyForUnit(larkspur, match).targets).toStrictEqual({
      standard: range(92, 96), // the ICU's (PILOT 2022 intermediate arm)
      hypercapnicRisk: range(88, 92), // BTS 2017, Table 4
      oxygenToxicityRisk: range(85, 88), // BTS 2017, Table 3
    });
    expect(policyForUnit(larkspur, matchUnit(larkspur.units, at(WARD_NAME)))).toBe(larkspur);
  });

  it('gives back the same policy object on every call from one unit, and its own to each unit and each policy', () => {
    // The same unit found by name, by another spelling of it and by location is the same unit.
    const fromIcu = [at(ICU_NAME), at(ICU_NAME.toUpperCase()), at(undefined, ['Location/lbgh-icu'])].map((where) =>
      policyForUnit(larkspur, matchUnit(larkspur.units, where)),
    );
    for (const effective of fromIcu) {
      expect(effective).toBe(fromIcu[0]);
      expect(effective).not.toBe(larkspur);
      expect(effective.targets.standard).toStrictEqual(range(92, 96)); // the ICU's (PILOT 2022 intermediate arm)
    }
    const fromHdu = policyForUnit(larkspur, matchUnit(larkspur.units, at('Larkspur Bay General Hospital, High Dependency Unit')));
    expect(fromHdu).not.toBe(fromIcu[0]);
    expect(fromHdu.targets.standard).toStrictEqual(range(90, 94)); // the HDU's (ICU-ROX 2020 90 %; ICONIC 2023 94 %)
    expect(policyForUnit(larkspur, matchUnit(larkspur.units, at('Larkspur Bay General Hospital, High Dependency Unit')))).toBe(fromHdu);

    // Another policy listing the same unit object gets its own effective policy, built from its own values.
    const stricter = withPolicy(larkspur, { disabledRules: ['oxygenation-summary'] });
    const fromStricterIcu = policyForUnit(stricter, matchUnit(stricter.units, at(ICU_NAME)));
    expect(fromStricterIcu).not.toBe(fromIcu[0]);
    expect(fromStricterIcu.disabledRules).toStrictEqual(['oxygenation-summary']);
    expect(fromStricterIcu.targets.standard).toStrictEqual(range(92, 96)); // the ICU's (PILOT 2022 intermediate arm)
  });
});

describe('unit targets in the engine', () => {
  it('gives a patient with no risk the ICU range on the ICU, saying the unit set it, and the BTS range on a ward', () => {
    const onIcu = targetOf(patientOn(ICU_NAME));
    expect(onIcu).toMatchObject({ kind: 'range', basis: 'standard', range: range(92, 96), sourceKey: 'local-policy' });
    expect(onIcu.reason).toMatch(/^ICU target \(local policy\); no documented risk/);
    // BTS 2017, Tables 1-3: 94-98 % where no unit override matches.
    const onWard = targetOf(patientOn(WARD_NAME));
    expect(onWard).toMatchObject({ kind: 'range', basis: 'standard', range: range(94, 98), sourceKey: 'bts-2017' });
    expect(onWard.reason).not.toContain('local policy');
  });

  it('gives a COPD patient 88-92 % on a ward without an override and on a unit that sets only its standard range', () => {
    for (const where of [WARD_NAME, ICU_NAME, undefined]) {
      const target = targetOf(patientOn(where, ['copd']));
      expect(target).toMatchObject({ kind: 'range', basis: 'hypercapnic-risk', range: range(88, 92) }); // BTS 2017, Table 4
      expect(target.reason).not.toContain('ICU');
    }
  });

  it("uses a unit's own at-risk range where it sets one, and names it", () => {
    const strict = withPolicy(BTS, {
      units: [unit('ICU', { names: [ICU_NAME] }, { standard: range(90, 94), hypercapnicRisk: range(86, 90) })], // local choice, invented
    });
    const target = targetOf(patientOn(ICU_NAME, ['copd']), strict);
    expect(target).toMatchObject({ basis: 'hypercapnic-risk', range: range(86, 90) });
    expect(target.reason).toMatch(/^ICU at-risk target \(local policy\); at risk of hypercapnic respiratory failure/);
  });

  it('keeps the special conditions ahead of every unit range', () => {
    for (const where of [ICU_NAME, 'Larkspur Bay General Hospital, High Dependency Unit', WARD_NAME]) {
      // BTS 2017, Table 3: paraquat or bleomycin, 85-88 %, on any unit.
      for (const kind of ['paraquat-poisoning', 'bleomycin-lung-injury'] as const) {
        expect(targetOf(patientOn(where, [kind]))).toMatchObject({ basis: 'oxygen-toxicity-risk', range: range(85, 88) });
      }
      // BTS 2017, Table 1: carbon monoxide, no SpO2 target (the oximeter cannot tell COHb from HbO2).
      expect(targetOf(patientOn(where, ['carbon-monoxide-poisoning']))).toMatchObject({
        kind: 'no-spo2-target',
        condition: 'carbon-monoxide-poisoning',
      });
      // BTS 2017, Table 2: pneumothorax without hypercapnic risk, aim for 100 %: no SpO2 range.
      expect(targetOf(patientOn(where, ['pneumothorax']))).toMatchObject({ kind: 'no-spo2-target', condition: 'pneumothorax' });
    }
  });

  it('re-targets an at-risk patient with a normal gas to the unit standard range', () => {
    // BTS 2017, Tables 2-4: at risk, PaCO2 below 6 kPa and no previous failure -> the standard range.
    const facts = patientOn(ICU_NAME, ['bronchiectasis'], {
      bloodGases: [bloodGas({ ageMinutes: 60, ph: 7.41, paco2Kpa: 5.1, pao2Kpa: 9.5, hco3: 24 })],
    });
    const target = targetOf(facts);
    expect(target).toMatchObject({ basis: 'standard-after-normal-gas', range: range(92, 96) });
    expect(target.reason).toMatch(/^ICU target \(local policy\)/);
  });

  it('judges the ordered range against the unit range in every rule, not only the target selection', () => {
    // Ordered 94-98 % (the BTS ward range) on the ICU: differs from the ICU's 92-96 %.
    const facts = patientOn(ICU_NAME, [], { orders: [oxygenOrder({ target: { lowPercent: 94, highPercent: 98, readFrom: 'structured' } })] });
    const result = evaluateOrder(facts, larkspur, { hook: 'order-sign', now: NOW });
    const differs = result.findings.find((f) => f.ruleId === 'target-differs-from-policy');
    expect(differs?.change).toStrictEqual({ kind: 'set-target', range: range(92, 96) });
    expect(differs?.values['targetReason']).toMatch(/^ICU target \(local policy\)/);
    // The same order on a ward matches the BTS 2017 range (Tables 1-3): no card about the range.
    const ward = evaluateOrder(patientOn(WARD_NAME, [], { orders: facts.orders }), larkspur, { hook: 'order-sign', now: NOW });
    expect(ward.findings.map((f) => f.ruleId)).not.toContain('target-differs-from-policy');
  });

  it('still advises against oxygen for a listed condition when SpO2 on air is in the unit range', () => {
    // BTS 2017, Table 3: acute coronary syndrome, oxygen only if hypoxaemic. SpO2 93 % on air is within
    // the ICU's 92-96 % but below the ward's 94-98 %.
    const facts = patientOn(ICU_NAME, ['acute-coronary-syndrome'], {
      orders: [oxygenOrder({ target: { lowPercent: 92, highPercent: 96, readFrom: 'structured' } })],
      spo2Percent: [spo2(93)],
      fio2Fraction: [fio2(0.21, 12)],
    });
    const ruleIds = (policy: Policy, where: string): string[] =>
      evaluateOrder({ ...facts, encounterUnit: where }, policy, { hook: 'order-sign', now: NOW }).findings.map((f) => f.ruleId);
    expect(ruleIds(larkspur, ICU_NAME)).toContain('oxygen-without-hypoxaemia');
    expect(ruleIds(larkspur, WARD_NAME)).not.toContain('oxygen-without-hypoxaemia');
  });

  it('holds for every unit range a policy may set: the unit picks only the ranges it sets, the special conditions never move', () => {
    // Unit ranges from the ICU trials (check-values §1b) and the guideline presets; each pairs a standard
    // range with an at-risk range the validation accepts (at-risk top at or below the standard floor).
    const choices: readonly { standard?: SaturationRange; hypercapnicRisk?: SaturationRange }[] = [
      { standard: range(92, 96) }, // PILOT 2022 intermediate arm; TSANZ 2015
      { standard: range(90, 94), hypercapnicRisk: range(88, 90) }, // ICU-ROX 2020 / ICONIC 2023; BTS 2017 Table 4 floor
      { standard: range(94, 98) }, // BTS 2017, Tables 1-3
      { hypercapnicRisk: range(86, 90) }, // invented local choice: at-risk only
    ];
    for (const choice of choices) {
      const policy = withPolicy(BTS, { units: [unit('ICU', { names: [ICU_NAME] }, choice)] });
      for (const where of [ICU_NAME, WARD_NAME, undefined]) {
        const onUnit = where === ICU_NAME;
        const standard = onUnit && choice.standard !== undefined ? choice.standard : range(94, 98); // BTS 2017, Tables 1-3
        const atRisk = onUnit && choice.hypercapnicRisk !== undefined ? choice.hypercapnicRisk : range(88, 92); // BTS 2017, Table 4
        expect(targetOf(patientOn(where), policy)).toMatchObject({ basis: 'standard', range: standard });
        expect(targetOf(patientOn(where, ['chest-wall-deformity']), policy)).toMatchObject({ basis: 'hypercapnic-risk', range: atRisk });
        expect(targetOf(patientOn(where, ['paraquat-poisoning', 'copd']), policy)).toMatchObject({ range: range(85, 88) }); // BTS 2017, Table 3
        expect(targetOf(patientOn(where, ['carbon-monoxide-poisoning', 'copd']), policy).kind).toBe('no-spo2-target'); // BTS 2017, Table 1
        expect(targetOf(patientOn(where, ['cluster-headache']), policy).kind).toBe('no-spo2-target'); // BTS 2017 (V2)
      }
    }
  });
});
