import { describe, expect, it } from 'vitest';
import { pickCurrentValues } from '../../../src/core/assessment/current-values.js';
import { assessHypercapnicRisk } from '../../../src/core/assessment/hypercapnic-risk.js';
import type { Policy } from '../../../src/core/policy.js';
import type { ConditionKind, Facts } from '../../../src/core/types.js';
import { BTS, NOW, bloodGas, buildFacts, condition, withPolicy } from '../facts-builder.js';

function assess(facts: Facts, policy: Policy = BTS) {
  return assessHypercapnicRisk(facts, policy, pickCurrentValues(facts, policy, NOW), NOW);
}

describe('assessHypercapnicRisk', () => {
  it.each<[ConditionKind, string]>([
    ['copd', 'BTS 2017, Table 4'],
    ['bronchiectasis', 'BTS 2017, Table 4'],
    ['cystic-fibrosis', 'BTS 2017, Table 4'],
    ['neuromuscular-disease', 'BTS 2017, Table 4'],
    ['chest-wall-deformity', 'BTS 2017, Table 4 (kyphoscoliosis)'],
    ['obesity-hypoventilation', 'BTS 2017, Table 4'],
    ['morbid-obesity', 'BTS 2017, Table 4'],
  ])('puts a patient with %s at risk (%s)', (kind) => {
    const result = assess(buildFacts({ conditions: [condition(kind)] }));
    expect(result.atRisk).toBe(true);
    expect(result.reasons).toStrictEqual([
      {
        kind: 'condition',
        evidence: `${condition(kind).display} (${condition(kind).matchedBy})`,
        condition: kind,
        reference: `Condition/${kind}`,
      },
    ]);
  });

  it('does not put a patient at risk for conditions outside Table 4', () => {
    const result = assess(buildFacts({ conditions: [condition('pregnancy'), condition('sickle-cell-crisis')] }));
    expect(result).toMatchObject({ atRisk: false, reasons: [], currentHypercapnia: undefined, previousFailure: false });
    expect(result.classification.kind).toBe('no-current-gas');
  });

  it('marks previous NIV or IMV and chronic hypercapnic failure as previous failure', () => {
    // BTS 2017, Tables 2-4: previous NIV/IMV is the exception to re-targeting
    const niv = assess(buildFacts({ conditions: [condition('previous-niv-or-imv')] }));
    expect(niv.reasons.map((r) => r.kind)).toStrictEqual(['previous-ventilation']);
    expect(niv.previousFailure).toBe(true);
    const chronic = assess(buildFacts({ conditions: [condition('chronic-hypercapnic-respiratory-failure')] }));
    expect(chronic.reasons.map((r) => r.kind)).toStrictEqual(['previous-hypercapnic-failure']);
    expect(chronic.previousFailure).toBe(true);
  });

  it('counts a current gas with PaCO2 at or above 6 kPa, naming the gas', () => {
    // BTS 2017 clarification (Thorax 72:588): hypercapnia is PaCO2 >= 6 kPa
    const result = assess(buildFacts({ bloodGases: [bloodGas({ ageMinutes: 180, ph: 7.36, paco2Kpa: 6.7 })] }));
    expect(result.currentHypercapnia).toBe(true);
    expect(result.reasons).toStrictEqual([
      { kind: 'current-hypercapnia', evidence: 'PaCO2 6.7 kPa 3 h ago', condition: undefined, reference: undefined },
    ]);
    expect(result.previousFailure).toBe(false);
  });

  it('counts an older hypercapnic gas as previous hypercapnic failure', () => {
    const historic = bloodGas({ ageMinutes: 200 * 24 * 60, ph: 7.3, paco2Kpa: 7.8 });
    const current = bloodGas({ ageMinutes: 30, ph: 7.41, paco2Kpa: 5.1 });
    const result = assess(buildFacts({ bloodGases: [current], historicBloodGases: [historic] }));
    expect(result.atRisk).toBe(true);
    expect(result.currentHypercapnia).toBe(false);
    expect(result.previousFailure).toBe(true);
    expect(result.reasons.map((r) => r.kind)).toStrictEqual(['previous-hypercapnia']);
    expect(result.reasons[0]?.evidence).toBe('PaCO2 7.8 kPa 200 days ago');
  });

  it('counts a raised bicarbonate and a raised BMI', () => {
    // HCO3 > 28 mmol/L: BTS 2017 as quoted secondarily (V2); BMI > 40: BTS 2017 Table 4 via ambulance material (V2)
    const facts = buildFacts({
      patient: { ageYears: 61, bmiKgPerM2: 43 },
      bloodGases: [bloodGas({ ageMinutes: 60, ph: 7.4, paco2Kpa: 5.9, hco3: 31 })],
    });
    expect(assess(facts).reasons.map((r) => [r.kind, r.evidence])).toStrictEqual([
      ['raised-bmi', 'BMI 43 kg/m2'],
      ['raised-bicarbonate', 'HCO3 31 mmol/L'],
    ]);
  });

  describe('acute hypercapnia without chronic retention', () => {
    // Tiring patient: acute severe asthma, pH 7.26 (RCEM: < 7.35 acidosis), PaCO2 7.9 kPa (BTS 2017
    // clarification: >= 6 kPa), HCO3 25 within the acute rise (check-values 3g, quoted secondarily)
    const tiring = buildFacts({
      conditions: [condition('acute-asthma')],
      bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.26, paco2Kpa: 7.9, hco3: 25 })],
    });

    it('does not make the patient at risk when the policy keeps the range (the default)', () => {
      // Policy default `keep`: BTS 2017 keeps acute asthma at 94-98 %
      expect(BTS.hypercapnicRisk.acuteHypercapniaWithoutRiskTarget).toBe('keep');
      const result = assess(tiring);
      expect(result).toMatchObject({ atRisk: false, reasons: [], currentHypercapnia: true, previousFailure: false });
      expect(result.classification.kind).toBe('acute');
    });

    it('counts the gas as a risk when the policy moves such patients to the at-risk range', () => {
      const policy = withPolicy(BTS, {
        hypercapnicRisk: { ...BTS.hypercapnicRisk, acuteHypercapniaWithoutRiskTarget: 'hypercapnic-risk-range' },
      });
      const result = assess(tiring, policy);
      expect(result.atRisk).toBe(true);
      expect(result.reasons.map((r) => r.kind)).toStrictEqual(['current-hypercapnia']);
    });

    it('keeps the current gas as a reason, in its place, when there are signs of chronic retention', () => {
      const facts = buildFacts({
        patient: { ageYears: 66, bmiKgPerM2: 44 },
        conditions: [condition('copd')],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.29, paco2Kpa: 8.4, hco3: 30 })],
      });
      expect(assess(facts).reasons.map((r) => r.kind)).toStrictEqual(['condition', 'raised-bmi', 'current-hypercapnia', 'raised-bicarbonate']);
    });
  });

  describe('edge cases', () => {
    it('counts PaCO2 of exactly 6.0 kPa as hypercapnia', () => {
      // BTS 2017 clarification: >= 6 kPa (check-values pitfall 7: the boundary is decided as "at or above")
      const result = assess(buildFacts({ bloodGases: [bloodGas({ ageMinutes: 10, ph: 7.38, paco2Kpa: 6.0 })] }));
      expect(result.currentHypercapnia).toBe(true);
      const below = assess(buildFacts({ bloodGases: [bloodGas({ ageMinutes: 10, ph: 7.38, paco2Kpa: 5.99 })] }));
      expect(below.currentHypercapnia).toBe(false);
      expect(below.atRisk).toBe(false);
    });

    it('needs BMI above 40 and HCO3 above 28, not equal to them', () => {
      // BTS 2017 Table 4 (BMI > 40, V2); BTS 2017 as quoted (HCO3 > 28, V2)
      const facts = buildFacts({
        patient: { ageYears: 61, bmiKgPerM2: 40 },
        bloodGases: [bloodGas({ ageMinutes: 60, ph: 7.4, paco2Kpa: 5.5, hco3: 28 })],
      });
      expect(assess(facts).atRisk).toBe(false);
    });

    it.each([
      // HCO3 > 28 with normal pH marks long-standing hypercapnia (BTS 2017 as quoted, V2; pH 7.35-7.45 RCEM, V)
      [7.47, 5.7, 32, false], // alkalaemic: metabolic alkalosis, not CO2 retention
      [7.45, 5.7, 32, true], // pH at the top of the normal range still counts
      [undefined, undefined, 32, true], // a serum HCO3 with no pH counts, to stay cautious
    ])('reads HCO3 %s at pH %s (PCO2 %s kPa) as a risk: %s', (ph, pco2, hco3, atRisk) => {
      const gas = bloodGas({
        ageMinutes: 60,
        specimen: ph === undefined ? 'unknown' : 'arterial',
        hco3,
        ...(ph === undefined ? {} : { ph }),
        ...(pco2 === undefined ? {} : { paco2Kpa: pco2 }),
      });
      expect(assess(buildFacts({ bloodGases: [gas] })).atRisk).toBe(atRisk);
    });

    it('ignores BMI when the policy does not list morbid obesity', () => {
      const policy = withPolicy(BTS, {
        hypercapnicRisk: { ...BTS.hypercapnicRisk, conditions: ['copd'] },
      });
      const facts = buildFacts({ patient: { ageYears: 50, bmiKgPerM2: 45 } });
      expect(assess(facts, policy).atRisk).toBe(false);
      expect(assess(facts).atRisk).toBe(true);
    });

    it('ignores a hypercapnic gas older than the previous-hypercapnia window', () => {
      const days = BTS.freshness.previousHypercapniaDays;
      const old = bloodGas({ ageMinutes: (days + 1) * 24 * 60, ph: 7.3, paco2Kpa: 8 });
      expect(assess(buildFacts({ historicBloodGases: [old] })).atRisk).toBe(false);
    });

    it('names a venous sample as such in the evidence', () => {
      const venous = bloodGas({ ageMinutes: 15, specimen: 'venous', ph: 7.32, paco2Kpa: 7.1 });
      const facts = buildFacts({ bloodGases: [venous], conditions: [condition('copd')] });
      expect(assess(facts).reasons.map((r) => r.evidence)).toContain('venous PCO2 7.1 kPa 15 min ago');
    });

    it('lists a condition coded twice only once', () => {
      const result = assess(buildFacts({ conditions: [condition('copd'), { ...condition('copd'), matchedBy: 'ICD-10 J44.1' }] }));
      expect(result.reasons).toHaveLength(1);
    });
  });
});
