import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/target-above-hypercapnic-range.js';
import type { ConditionKind } from '../../../src/core/types.js';
import { bloodGas, buildFacts, condition, oxygenOrder, respRate, spo2 } from '../facts-builder.js';
import { expectCardRenders, expectRangeNamedAsPolicys, POLICY_AT_RISK_RANGES, policyWithAtRiskRange } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

/** The worked case: 64-year-old with severe kyphoscoliosis, PaCO2 6.7 kPa this morning, 3 L/min NC at 94-98 %. */
const workedCase = buildFacts({
  patient: { ageYears: 64, bmiKgPerM2: 23 },
  orders: [oxygenOrder({ flowLPerMin: 3 })],
  conditions: [condition('chest-wall-deformity')],
  bloodGases: [bloodGas({ ageMinutes: 240, ph: 7.37, paco2Kpa: 6.7, pao2Kpa: 8.2, hco3: 28 })],
  spo2Percent: [spo2(95)],
  respRatePerMin: [respRate(20)],
});

describe('target-above-hypercapnic-range', () => {
  it('runs on both hooks as a warning by default', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('asks for an arterial sample when the high PCO2 is venous', () => {
    // Venous PCO2 runs about 0.4-1.1 kPa above arterial (check-values 3g, V2): 6.8 kPa venous is
    // possible hypercapnia (>= 6 kPa, BTS 2017 clarification), which an arterial gas settles.
    const facts = buildFacts({
      orders: [oxygenOrder({ flowLPerMin: 2 })],
      conditions: [condition('copd')],
      bloodGases: [bloodGas({ ageMinutes: 60, specimen: 'venous', ph: 7.36, paco2Kpa: 6.8, hco3: 28 })],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.gasStatus).toBe(
      'venous PCO2 6.8 kPa 1 h ago (hypercapnia at or above 6 kPa); a venous PCO2 reads higher than arterial, so confirm with an arterial sample',
    );
    expectCardRenders(finding);
    const unlabelled = buildFacts({
      ...facts,
      bloodGases: [bloodGas({ ageMinutes: 60, specimen: 'unknown', paco2Kpa: 6.8 })],
    });
    expect(onlyFinding(runRule(rule, unlabelled)).values.gasStatus).toBe(
      'PCO2 (specimen not stated) 6.8 kPa 1 h ago (hypercapnia at or above 6 kPa); the sample may be venous, so confirm with an arterial sample',
    );
  });

  it('advises 88-92 % in the worked case, critical because the gas shows hypercapnia', () => {
    // BTS 2017, Table 4: 88-92 % when at risk; PaCO2 >= 6 kPa is hypercapnia (BTS 2017 clarification)
    const finding = onlyFinding(runRule(rule, workedCase));
    expect(finding.indicator).toBe('critical');
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } });
    expect(finding.values.orderedRange).toBe('94–98 %');
    expect(finding.values.advisedRange).toBe('88–92 %');
    expect(finding.values.gasStatus).toBe('PaCO2 6.7 kPa 4 h ago (hypercapnia at or above 6 kPa)'); // BTS 2017 clarification: >= 6 kPa
    // BTS 2017, Tables 2-4: repeat gas in 30-60 min
    expect(finding.values.repeatGasWindow).toBe('30–60 min');
    // Nasal cannula 3 L/min: FiO2 about 0.32 (rule of 4, check-values 2a: common practice / V2, ± 0.05)
    const estimate = Number(finding.values.deliveredFio2?.slice(0, 4));
    expect(Math.abs(estimate - 0.32)).toBeLessThanOrEqual(0.05);
    expect(finding.computations[0]?.name).toBe('Delivered FiO2 (estimate)');
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Target 94–98 % ordered, but this patient is at risk of hypercapnia: 88–92 % advised');
    expect(card.label).toBe('Change target to 88–92 %');
  });

  it.each<[ConditionKind, string]>([
    ['copd', 'BTS 2017, Table 4'],
    ['neuromuscular-disease', 'BTS 2017, Table 4'],
    ['obesity-hypoventilation', 'BTS 2017, Table 4'],
  ])('warns for %s before any gas (%s)', (kind) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: [condition(kind)] })));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.gasStatus).toBe('none yet');
    expectCardRenders(finding);
  });

  it('does not fire when the ordered range is the at-risk range', () => {
    const facts = buildFacts({
      conditions: [condition('copd')],
      orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('does not fire for a patient without risk', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('fires for an upper bound of 93 %, one above the at-risk range', () => {
      const facts = buildFacts({
        conditions: [condition('copd')],
        orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 93, readFrom: 'text' } })],
      });
      expect(onlyFinding(runRule(rule, facts)).values.orderedRange).toBe('88–93 %');
    });

    it('does not fire once a normal gas re-targets a patient with no previous failure', () => {
      // BTS 2017, Tables 2-4: normal PaCO2 and no previous NIV/IMV -> 94-98 %
      const facts = buildFacts({
        conditions: [condition('copd')],
        bloodGases: [bloodGas({ ageMinutes: 40, ph: 7.42, paco2Kpa: 5.2, pao2Kpa: 9 })],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('is a warning, not critical, when the current gas is just below 6 kPa but an old one was high', () => {
      const facts = buildFacts({
        conditions: [condition('copd')],
        bloodGases: [bloodGas({ ageMinutes: 40, ph: 7.4, paco2Kpa: 5.9 })],
        historicBloodGases: [bloodGas({ ageMinutes: 400 * 24 * 60, ph: 7.3, paco2Kpa: 7.5 })],
      });
      expect(onlyFinding(runRule(rule, facts)).indicator).toBe('warning');
    });
  });
});

describe('target-above-hypercapnic-range under a range the policy chose', () => {
  // A policy or unit may set its own at-risk range (docs/policy.md); the card must not say the
  // guideline gives it (ranges and their sources in card-check.ts).
  it.each(POLICY_AT_RISK_RANGES)('names the at-risk range %i-%i as this policy\'s, never as BTS 2017\'s', (lowPercent, highPercent) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: [oxygenOrder({ flowLPerMin: 2, target: { lowPercent: 94, highPercent: 98, readFrom: 'text' } })], conditions: [condition('copd')], spo2Percent: [spo2(highPercent)] }), { policy: policyWithAtRiskRange(lowPercent, highPercent) }));
    expectRangeNamedAsPolicys(finding, lowPercent, highPercent);
  });
});

