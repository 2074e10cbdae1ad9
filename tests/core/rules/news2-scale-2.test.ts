import { describe, expect, it } from 'vitest';
import { evaluateOrder } from '../../../src/core/engine.js';
import { rule } from '../../../src/core/rules/news2-scale-2.js';
import type { ConditionKind, Facts } from '../../../src/core/types.js';
import { BTS, NOW, TSANZ, bloodGas, buildFacts, condition, fio2, oxygenOrder, spo2, withPolicy } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const atRiskOrder = oxygenOrder({ device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } });

function patient(kinds: readonly ConditionKind[], extra: Partial<Facts> = {}): Facts {
  return buildFacts({ orders: [atRiskOrder], conditions: kinds.map((k) => condition(k)), ...extra });
}

/** Chronic compensated COPD gas: pH 7.37 (RCEM normal), PaCO2 7.1 kPa (>= 6 kPa, BTS 2017), HCO3 31. */
const hypercapnicArterial = bloodGas({ ageMinutes: 40, ph: 7.37, paco2Kpa: 7.1, pao2Kpa: 7.9, hco3: 31 });

describe('news2-scale-2', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('reminds to score on Scale 2 when an arterial gas confirms hypercapnia and 88-92 % is the target', () => {
    // RCP 2017 NEWS2: Scale 2 for confirmed hypercapnic respiratory failure with a prescribed 88-92 %
    // target (check-values §4); SpO2 90 % on oxygen scores 0 on Scale 2 and 3 on Scale 1 (§4)
    const facts = patient(['copd'], { bloodGases: [hypercapnicArterial], spo2Percent: [spo2(90, 15)], fio2Fraction: [fio2(0.28, 15)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values).toMatchObject({
      targetRange: '88–92 %',
      confirmedBy: 'PaCO2 7.1 kPa 40 min ago',
      currentScore: 'SpO2 90 % (15 min ago) on oxygen scores 0 on Scale 2 and 3 on Scale 1',
    });
    expect(finding.sourceKeys).toStrictEqual(['rcp-news2-2017', 'bts-2017']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Target 88–92 % with confirmed hypercapnic failure: score SpO2 on NEWS2 Scale 2');
  });

  it.each<[string, readonly ConditionKind[], Partial<Facts>]>([
    ['previous NIV', ['copd', 'previous-niv-or-imv'], {}],
    ['chronic hypercapnic respiratory failure', ['chronic-hypercapnic-respiratory-failure'], {}],
    ['an earlier hypercapnic gas', ['copd'], { historicBloodGases: [bloodGas({ ageMinutes: 60 * 24 * 60, ph: 7.31, paco2Kpa: 7.4 })] }],
  ])('counts %s as confirmation', (_, kinds, extra) => {
    const finding = onlyFinding(runRule(rule, patient(kinds, extra)));
    expectCardRenders(finding);
  });

  it('does not fire for COPD without confirmed hypercapnia: Scale 1 applies', () => {
    // RCP 2017 (check-values §4): Scale 1 for all others, including COPD without hypercapnia
    expect(runRule(rule, patient(['copd']))).toStrictEqual([]);
    expect(runRule(rule, patient(['bronchiectasis'], { spo2Percent: [spo2(90)] }))).toStrictEqual([]);
  });

  it('does not fire when the standard range applies', () => {
    // BTS 2017 Tables 2-4: re-targeted to 94-98 % after a normal gas, no previous failure
    const normal = bloodGas({ ageMinutes: 30, ph: 7.41, paco2Kpa: 5.2, hco3: 24 });
    expect(runRule(rule, patient(['copd'], { bloodGases: [normal] }))).toStrictEqual([]);
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('waits while 94-98 % is ordered, though 88-92 % is advised: Scale 2 goes with a prescribed 88-92 %', () => {
      // RCP 2017 NEWS2: Scale 2 for confirmed hypercapnic failure with a prescribed 88-92 % target
      const order = oxygenOrder({ target: { lowPercent: 94, highPercent: 98, readFrom: 'structured' } });
      const facts = buildFacts({ orders: [order], conditions: [condition('copd')], bloodGases: [hypercapnicArterial] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('does not take a venous PCO2 as confirmation', () => {
      // venous PCO2 runs 0.4-1.1 kPa above arterial (check-values 3g, quoted secondarily)
      const venous = bloodGas({ ageMinutes: 40, specimen: 'venous', ph: 7.36, paco2Kpa: 7.0, hco3: 31 });
      expect(runRule(rule, patient(['copd'], { bloodGases: [venous] }))).toStrictEqual([]);
    });

    it('counts PaCO2 exactly 6.0 kPa as confirmation and 5.99 kPa not', () => {
      // BTS 2017 clarification: hypercapnia is PaCO2 >= 6 kPa
      const at = (kpa: number) => patient(['copd'], { bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.37, paco2Kpa: kpa, hco3: 29 })] });
      expect(runRule(rule, at(6.0)).length).toBe(1);
      expect(runRule(rule, at(5.99))).toStrictEqual([]);
    });

    it('scores SpO2 94 % on oxygen as 1 on Scale 2 and on air as 0', () => {
      // check-values §4: 94 % on Scale 2 scores 1 on oxygen, 0 on air
      const onOxygen = patient(['previous-niv-or-imv', 'copd'], { spo2Percent: [spo2(94)], fio2Fraction: [fio2(0.28)] });
      expect(onlyFinding(runRule(rule, onOxygen)).values.currentScore).toContain('on oxygen scores 1 on Scale 2');
      const onAir = patient(['previous-niv-or-imv', 'copd'], { spo2Percent: [spo2(94)], fio2Fraction: [fio2(0.21)] });
      expect(onlyFinding(runRule(rule, onAir)).values.currentScore).toContain('on air scores 0 on Scale 2');
    });

    it('is switched off in the TSANZ preset, where wards chart another early-warning score', () => {
      const facts = patient(['copd', 'previous-niv-or-imv']);
      const ids = (policy: typeof BTS) => evaluateOrder(facts, policy, { hook: 'order-sign', now: NOW }).findings.map((f) => f.ruleId);
      expect(ids(BTS)).toContain('news2-scale-2');
      expect(ids(TSANZ)).not.toContain('news2-scale-2');
    });

    it('is silent in pregnancy, for which NEWS2 is not validated', () => {
      // RCP 2017, from memory: NEWS2 is not for use in pregnancy
      expect(runRule(rule, patient(['copd', 'previous-niv-or-imv', 'pregnancy']))).toStrictEqual([]);
    });

    it('follows the policy at-risk range', () => {
      const policy = withPolicy(BTS, { targets: { ...BTS.targets, hypercapnicRisk: { lowPercent: 88, highPercent: 93 } } });
      const order = oxygenOrder({ target: { lowPercent: 88, highPercent: 93, readFrom: 'structured' } });
      const facts = buildFacts({ orders: [order], conditions: [condition('previous-niv-or-imv'), condition('copd')] });
      expect(onlyFinding(runRule(rule, facts, { policy })).values.targetRange).toBe('88–93 %');
      expect(runRule(rule, patient(['copd', 'previous-niv-or-imv']), { policy })).toStrictEqual([]);
    });
  });
});
