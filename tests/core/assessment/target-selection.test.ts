import { describe, expect, it } from 'vitest';
import { pickCurrentValues } from '../../../src/core/assessment/current-values.js';
import { assessHypercapnicRisk } from '../../../src/core/assessment/hypercapnic-risk.js';
import {
  compareOrderedTarget,
  selectTarget,
  selectTitrationTarget,
} from '../../../src/core/assessment/target-selection.js';
import type { ApplicableTarget } from '../../../src/core/assessment/types.js';
import type { Policy } from '../../../src/core/policy.js';
import type { Facts, SaturationRange } from '../../../src/core/types.js';
import { BTS, NOW, TSANZ, bloodGas, buildFacts, condition, oxygenOrder, withPolicy } from '../facts-builder.js';

function target(facts: Facts, policy: Policy = BTS): ApplicableTarget {
  const risk = assessHypercapnicRisk(facts, policy, pickCurrentValues(facts, policy, NOW), NOW);
  return selectTarget(facts, policy, risk);
}

const range = (t: ApplicableTarget): SaturationRange | string => (t.kind === 'range' ? t.range : t.condition);
const normalGas = bloodGas({ ageMinutes: 45, ph: 7.41, paco2Kpa: 5.3, pao2Kpa: 9.1, hco3: 25 });

describe('selectTarget', () => {
  it('applies 94-98 % to an acutely ill adult with no hypercapnic risk', () => {
    // BTS 2017, Tables 1-3
    expect(target(buildFacts())).toMatchObject({ range: { lowPercent: 94, highPercent: 98 }, basis: 'standard' });
  });

  it('applies 92-96 % under the TSANZ preset', () => {
    // TSANZ 2015, Respirology 20:1182
    expect(range(target(buildFacts(), TSANZ))).toStrictEqual({ lowPercent: 92, highPercent: 96 });
  });

  it('applies 88-92 % when at risk and no gas is back yet, naming the reasons', () => {
    // BTS 2017, Table 4
    const result = target(buildFacts({ conditions: [condition('copd')] }));
    expect(result).toStrictEqual({
      kind: 'range',
      range: { lowPercent: 88, highPercent: 92 },
      basis: 'hypercapnic-risk',
      reason: 'at risk of hypercapnic respiratory failure (Chronic obstructive lung disease (SNOMED CT 13645005))',
      sourceKey: 'bts-2017',
    });
  });

  describe('re-targeting once a gas is back', () => {
    it('moves an at-risk patient with normal PaCO2 and no previous failure to 94-98 %', () => {
      // BTS 2017, Tables 2-4: PaCO2 normal and no history of NIV/IMV -> 94-98 %
      const result = target(buildFacts({ conditions: [condition('copd')], bloodGases: [normalGas] }));
      expect(result).toMatchObject({ range: { lowPercent: 94, highPercent: 98 }, basis: 'standard-after-normal-gas' });
    });

    it.each([
      ['previous NIV or IMV', { conditions: [condition('copd'), condition('previous-niv-or-imv')] }],
      ['chronic hypercapnic respiratory failure', { conditions: [condition('chronic-hypercapnic-respiratory-failure')] }],
      ['an older hypercapnic gas', {
        conditions: [condition('copd')],
        historicBloodGases: [bloodGas({ ageMinutes: 90 * 24 * 60, ph: 7.31, paco2Kpa: 7.6 })],
      }],
    ])('keeps 88-92 %% after a normal gas when there is %s', (_, parts: Partial<Facts>) => {
      // BTS 2017, Tables 2-4; BTS 2008, Table 3: previous NIV/IMV or hypercapnic failure stays at 88-92 %
      const result = target(buildFacts({ ...parts, bloodGases: [normalGas] }));
      expect(result).toMatchObject({ range: { lowPercent: 88, highPercent: 92 }, basis: 'hypercapnic-risk' });
    });

    it('keeps 88-92 % when the current gas shows hypercapnia', () => {
      // BTS 2017, Table 4 (worked case: kyphoscoliosis, PaCO2 6.7 kPa this morning)
      const gas = bloodGas({ ageMinutes: 180, ph: 7.36, paco2Kpa: 6.7 });
      const result = target(buildFacts({ conditions: [condition('chest-wall-deformity')], bloodGases: [gas] }));
      expect(range(result)).toStrictEqual({ lowPercent: 88, highPercent: 92 });
    });
  });

  describe('acute hypercapnia without chronic retention', () => {
    // A tiring patient: pH 7.27 (RCEM: < 7.35 acidosis), PaCO2 8.0 kPa (BTS 2017 clarification:
    // >= 6 kPa), HCO3 25.5 within the acute rise (check-values 3g, quoted secondarily)
    const tiringGas = bloodGas({ ageMinutes: 25, ph: 7.27, paco2Kpa: 8.0, hco3: 25.5 });
    const movePolicy = withPolicy(BTS, {
      hypercapnicRisk: { ...BTS.hypercapnicRisk, acuteHypercapniaWithoutRiskTarget: 'hypercapnic-risk-range' },
    });

    it.each([
      ['acute severe asthma', [condition('acute-asthma')]],
      ['opioid toxicity', [condition('sedative-or-opioid-toxicity')]],
      ['exhaustion with nothing documented', []],
    ])('keeps 94-98 %% by default in %s, and says why', (_, conditions) => {
      // BTS 2017 keeps acute asthma at 94-98 % (Tables 1-3); policy default `keep` (local decision)
      const result = target(buildFacts({ conditions, bloodGases: [tiringGas] }));
      expect(result).toMatchObject({
        range: { lowPercent: 94, highPercent: 98 },
        basis: 'standard-despite-acute-hypercapnia',
        sourceKey: 'local-policy',
      });
      expect(result.kind === 'range' ? result.reason : '').toContain('no sign of chronic CO2 retention');
    });

    it('moves to 88-92 % when the policy says so, naming local policy as the reason', () => {
      const result = target(buildFacts({ conditions: [condition('acute-asthma')], bloodGases: [tiringGas] }), movePolicy);
      expect(result).toMatchObject({ range: { lowPercent: 88, highPercent: 92 }, basis: 'hypercapnic-risk', sourceKey: 'local-policy' });
      expect(result.kind === 'range' ? result.reason : '').toContain('local policy moves the range');
    });

    it('keeps 92-96 % under the TSANZ preset', () => {
      // TSANZ 2015: 92-96 % for most acute medical patients
      expect(range(target(buildFacts({ bloodGases: [tiringGas] }), TSANZ))).toStrictEqual({ lowPercent: 92, highPercent: 96 });
    });

    it('still gives 88-92 % for acute-on-chronic hypercapnia whatever the key', () => {
      // BTS 2017, Table 4: COPD with hypercapnia stays at 88-92 %
      for (const policy of [BTS, movePolicy]) {
        const result = target(buildFacts({ conditions: [condition('copd')], bloodGases: [tiringGas] }), policy);
        expect(result).toMatchObject({ range: { lowPercent: 88, highPercent: 92 }, basis: 'hypercapnic-risk', sourceKey: 'bts-2017' });
      }
    });

    it('keeps no SpO2 target for a pneumothorax in a tiring patient', () => {
      // BTS 2017, Table 2: pneumothorax under observation, aim for 100 %
      expect(range(target(buildFacts({ conditions: [condition('pneumothorax')], bloodGases: [tiringGas] })))).toBe('pneumothorax');
    });
  });

  describe('special situations', () => {
    it('sets no SpO2 target in carbon monoxide poisoning, even with COPD', () => {
      // BTS 2017, Table 1: the oximeter cannot tell COHb from oxyhaemoglobin
      const result = target(buildFacts({ conditions: [condition('copd'), condition('carbon-monoxide-poisoning')] }));
      expect(result).toMatchObject({ kind: 'no-spo2-target', condition: 'carbon-monoxide-poisoning', sourceKey: 'bts-2017' });
    });

    it('applies 85-88 % in paraquat poisoning and bleomycin lung injury', () => {
      // BTS 2017, Table 3 (V2)
      expect(range(target(buildFacts({ conditions: [condition('paraquat-poisoning')] })))).toStrictEqual({ lowPercent: 85, highPercent: 88 });
      expect(range(target(buildFacts({ conditions: [condition('bleomycin-lung-injury'), condition('copd')] })))).toStrictEqual({ lowPercent: 85, highPercent: 88 });
    });

    it('sets no SpO2 target for pneumothorax or cluster headache without hypercapnic risk', () => {
      // BTS 2017, Table 2 (pneumothorax: aim 100 %); BTS 2017 (cluster headache, V2)
      expect(range(target(buildFacts({ conditions: [condition('pneumothorax')] })))).toBe('pneumothorax');
      expect(range(target(buildFacts({ conditions: [condition('cluster-headache')] })))).toBe('cluster-headache');
    });

    it('keeps 88-92 % for pneumothorax in a patient at risk of hypercapnia', () => {
      // Our decision (docs/clinical-basis.md): BTS 2017 Table 4 risk outranks the Table 2 aim of 100 %
      expect(range(target(buildFacts({ conditions: [condition('pneumothorax'), condition('copd')] })))).toStrictEqual({ lowPercent: 88, highPercent: 92 });
    });
  });
});

const ordered = (low: number, high: number) => [oxygenOrder({ target: { lowPercent: low, highPercent: high, readFrom: 'structured' } })];
const copd = [condition('copd')];

describe('compareOrderedTarget', () => {
  const at = (facts: Facts) => compareOrderedTarget(facts.orders[0], target(facts), BTS);

  it.each<[string, Partial<Facts>, string]>([
    ['a matching range', { orders: ordered(94, 98) }, 'matches'],
    ['no target', { orders: [oxygenOrder({ target: undefined })] }, 'missing'],
    ['94-98 % for an at-risk patient', { orders: ordered(94, 98), conditions: copd }, 'above-hypercapnic-range'],
    ['90-94 % for an at-risk patient', { orders: ordered(90, 94), conditions: copd }, 'above-hypercapnic-range'],
    ['85-90 % for an at-risk patient', { orders: ordered(85, 90), conditions: copd }, 'differs'],
    ['88-92 % without risk', { orders: ordered(88, 92) }, 'lower-range-without-risk'],
    ['88-92 % in a tiring asthmatic', {
      orders: ordered(88, 92),
      conditions: [condition('acute-asthma')],
      bloodGases: [bloodGas({ ageMinutes: 25, ph: 7.27, paco2Kpa: 8.0, hco3: 25.5 })],
    }, 'lower-range-without-risk'],
    ['90-94 % without risk', { orders: ordered(90, 94) }, 'differs'],
    ['94-98 % in paraquat poisoning', { orders: ordered(94, 98), conditions: [condition('paraquat-poisoning')] }, 'toxicity-range-not-ordered'],
    ['no target in paraquat poisoning', { orders: [oxygenOrder({ target: undefined })], conditions: [condition('paraquat-poisoning')] }, 'toxicity-range-not-ordered'],
    ['a target in CO poisoning', { orders: ordered(94, 98), conditions: [condition('carbon-monoxide-poisoning')] }, 'no-range-applies'],
  ])('classifies %s', (_, parts, kind) => {
    expect(at(buildFacts(parts)).kind).toBe(kind);
  });

  describe('edge cases', () => {
    it('reports no order when there is none', () => {
      expect(compareOrderedTarget(undefined, target(buildFacts()), BTS)).toStrictEqual({ kind: 'no-order' });
    });

    it('treats 88-92 % as matching for an at-risk patient and as lower for a re-targeted one', () => {
      expect(at(buildFacts({ orders: ordered(88, 92), conditions: copd })).kind).toBe('matches');
      expect(at(buildFacts({ orders: ordered(88, 92), conditions: copd, bloodGases: [normalGas] })).kind).toBe('lower-range-without-risk');
    });
  });
});

describe('selectTitrationTarget', () => {
  it('titrates to the ordered range when there is one, else the applicable range', () => {
    // common practice: an individual range within 94-98 % (BTS 2017, Tables 1-3) is titrated to as ordered
    const facts = buildFacts({ orders: [oxygenOrder({ target: { lowPercent: 95, highPercent: 97, readFrom: 'text' } })] });
    expect(selectTitrationTarget(facts.orders[0], target(facts), compareOrderedTarget(facts.orders[0], target(facts), BTS))).toStrictEqual({
      range: { lowPercent: 95, highPercent: 97 },
      basis: 'ordered',
    });
    const none = buildFacts({ orders: [oxygenOrder({ target: undefined })] });
    expect(selectTitrationTarget(none.orders[0], target(none), compareOrderedTarget(none.orders[0], target(none), BTS))).toStrictEqual({
      range: { lowPercent: 94, highPercent: 98 },
      basis: 'applicable',
    });
  });

  describe('edge cases', () => {
    it('has no titration target where no SpO2 target applies', () => {
      const facts = buildFacts({ conditions: [condition('carbon-monoxide-poisoning')] });
      expect(selectTitrationTarget(facts.orders[0], target(facts), { kind: 'no-range-applies' })).toBeUndefined();
    });

    it('titrates an at-risk patient to 88-92 % when a higher range was ordered', () => {
      // BTS 2017, Table 4: 88-92 % for patients at risk of hypercapnic respiratory failure. Judging
      // SpO2 against the higher ordered range would prompt more oxygen for the patient it can harm.
      const facts = buildFacts({ orders: ordered(94, 98), conditions: copd });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))).toStrictEqual({
        range: { lowPercent: 88, highPercent: 92 },
        basis: 'advised-over-ordered',
      });
    });

    it('titrates a paraquat patient to 85-88 % when the standard range was ordered', () => {
      // BTS 2017, Table 3 (V2: quoted by a secondary source): paraquat poisoning, target 85-88 %.
      const facts = buildFacts({ orders: ordered(94, 98), conditions: [condition('paraquat-poisoning')] });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))?.range).toStrictEqual({
        lowPercent: 85,
        highPercent: 88,
      });
    });

    it('titrates a tiring patient to the kept range when a lower range was ordered', () => {
      // acute asthma, pH 7.27 (RCEM < 7.35), PaCO2 7.8 kPa (BTS 2017 clarification), HCO3 25 within the
      // acute rise (check-values 3g); BTS 2017 keeps acute asthma at 94-98 %
      const facts = buildFacts({
        orders: ordered(88, 92),
        conditions: [condition('acute-asthma')],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.27, paco2Kpa: 7.8, hco3: 25 })],
      });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))).toStrictEqual({
        range: { lowPercent: 94, highPercent: 98 },
        basis: 'applicable-over-lower-ordered',
      });
    });

    it.each<[string, Facts]>([
      // BTS 2017, Tables 2-4: 94-98 % without a documented hypercapnic risk
      ['no documented risk', buildFacts({ orders: ordered(88, 92) })],
      // BTS 2017, Table 4: an at-risk patient whose gas shows a normal PCO2 (5.3 kPa, below 6.0) and no
      // previous NIV or hypercapnic failure is re-targeted to 94-98 %
      ['a normal gas in COPD', buildFacts({ orders: ordered(88, 92), conditions: copd, bloodGases: [normalGas] })],
    ])('titrates to the 94-98 %% that applies when 88-92 %% is ordered with %s', (_, facts) => {
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))).toStrictEqual({
        range: { lowPercent: 94, highPercent: 98 }, // BTS 2017, Tables 2-4
        basis: 'applicable-over-lower-ordered',
      });
    });

    it.each<[number, number, number, number]>([
      // BTS 2017, Tables 1-3: 94-98 % without a documented risk; lower bounds below 94 % reach lower
      [90, 94, 94, 98],
      [92, 96, 94, 98], // TSANZ 2015 (Respirology 20:1182) range, ordered under the BTS policy
    ])('titrates to the applicable range when %s-%s %% is ordered below it', (low, high, appliedLow, appliedHigh) => {
      const facts = buildFacts({ orders: ordered(low, high), ...(appliedLow === 88 ? { conditions: copd } : {}) });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))).toStrictEqual({
        range: { lowPercent: appliedLow, highPercent: appliedHigh },
        basis: 'applicable-over-lower-ordered',
      });
    });

    it('keeps an at-risk patient\'s lower ordered range: the oxygen alert card range applies', () => {
      // BTS 2017, Tables 2-4: keep 88-92 % or the range on the patient's oxygen alert card
      const facts = buildFacts({ orders: ordered(85, 89), conditions: copd });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))).toStrictEqual({
        range: { lowPercent: 85, highPercent: 89 },
        basis: 'ordered',
      });
    });

    it.each<[number, number]>([
      [94, 96], // common practice: a narrower range inside 94-98 % (BTS 2017, Tables 1-3) may be an individual target
      [96, 99], // common practice: no lower than 94 %, so nothing hypoxaemic passes as in range
    ])('keeps an ordered %s-%s %% that reaches no lower than the applicable range', (low, high) => {
      const facts = buildFacts({ orders: ordered(low, high) });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))).toStrictEqual({
        range: { lowPercent: low, highPercent: high },
        basis: 'ordered',
      });
    });

    it('keeps the ordered 88-92 % for a patient at risk (it is the range that applies)', () => {
      // BTS 2017, Table 4
      const facts = buildFacts({ orders: ordered(88, 92), conditions: copd });
      const applicable = target(facts);
      expect(selectTitrationTarget(facts.orders[0], applicable, compareOrderedTarget(facts.orders[0], applicable, BTS))?.basis).toBe('ordered');
    });
  });
});
