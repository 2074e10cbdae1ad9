import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/blood-gas-overdue.js';
import { BTS, bloodGas, minutesAgo } from '../facts-builder.js';
import { reviewFacts } from '../titration/review-facts.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

// Invented Larkspur Bay patients at risk of hypercapnic respiratory failure, reviewed on patient-view.
// BTS 2017, Tables 2-4 (check-values §1d, verified): repeat the blood gas 30-60 min after starting or
// increasing oxygen in an at-risk patient. Look-back 8 h (local choice). Ages in minutes.
const view = { hook: 'patient-view' as const };
const copdOnCannula = {
  order: { flowLPerMin: 2, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' as const } },
  conditions: ['copd' as const],
};

describe('blood-gas-overdue', () => {
  it('runs on patient-view only, as a warning, with the BTS 30-60 min window', () => {
    expect(rule.hooks).toStrictEqual(['patient-view']);
    expect(rule.defaultIndicator).toBe('warning');
    expect(BTS.thresholds.repeatGasMinutes).toStrictEqual({ from: 30, to: 60 }); // BTS 2017, Tables 2-4
  });

  it('warns when the flow was raised 2 → 3 L/min 3 h ago with no gas since', () => {
    // Gas 5 h ago; flow raised at 180 min ago: 180 min since > 60 (BTS 2017): overdue by 2 h.
    const facts = reviewFacts({
      ...copdOnCannula,
      spo2: [[89, 300], [90, 180], [91, 60]],
      flows: [[2, 300], [3, 180], [3, 60]],
      gases: [bloodGas({ ageMinutes: 300, ph: 7.37, paco2Kpa: 6.4, pao2Kpa: 8.1, hco3: 29 })],
    });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.dueWindow).toBe('overdue (the window closed 2 h ago)');
    expect(expectCardRenders(finding).summary).toBe(
      'Blood gas overdue: recorded O2 flow raised 2 L/min → 3 L/min 3 h ago, no gas since (hypercapnic risk)',
    );
  });

  it('warns when the oxygen order itself was written within the window and no gas has followed', () => {
    // Order written 90 min ago (> 60 min, BTS 2017 Tables 2-4), no gas on record.
    const facts = reviewFacts({
      order: { ...copdOnCannula.order, authoredOn: minutesAgo(90) },
      conditions: ['copd'],
      spo2: [[90, 80], [91, 20]],
    });
    const finding = onlyFinding(runRule(rule, facts, view));
    expect(finding.values.raise).toBe('oxygen ordered (Nasal cannula at 2 L/min)');
    expect(finding.values.lastGas).toBe('none on record');
  });

  it('counts a rise in recorded FiO2 on any device', () => {
    // Venturi 24 % → 28 % recorded 120 min ago (FiO2 3150-0), no gas since: overdue (> 60 min).
    const facts = reviewFacts({
      order: { device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 4, target: copdOnCannula.order.target },
      conditions: ['copd'],
      spo2: [[88, 240], [90, 120], [90, 30]],
      fio2: [[0.24, 240], [0.28, 120], [0.28, 30]],
    });
    expect(onlyFinding(runRule(rule, facts, view)).values.raise).toBe('recorded FiO2 raised 0.24 → 0.28');
  });

  describe('stays quiet', () => {
    it('while the 30-60 min window is still open', () => {
      // Flow raised 45 min ago: within 30-60 min (BTS 2017), due, not overdue; order-sign speaks then.
      const facts = reviewFacts({ ...copdOnCannula, spo2: [[89, 200], [90, 45]], flows: [[2, 200], [3, 45]] });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('when a gas was taken after the rise', () => {
      // Flow raised 180 min ago, gas 120 min ago (after it): the repeat was done.
      const facts = reviewFacts({
        ...copdOnCannula,
        spo2: [[89, 300], [90, 180], [91, 60]],
        flows: [[2, 300], [3, 180], [3, 60]],
        gases: [bloodGas({ ageMinutes: 120, ph: 7.38, paco2Kpa: 6.2, pao2Kpa: 8.4, hco3: 29 })],
      });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('when the oxygen was lowered, not raised', () => {
      // 3 → 2 L/min: weaning; BTS 2017 ties the repeat gas to starting or increasing oxygen.
      const facts = reviewFacts({ ...copdOnCannula, spo2: [[90, 300], [91, 180]], flows: [[3, 300], [2, 180]] });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('for a patient not at risk of hypercapnic failure', () => {
      // No BTS 2017 Table 4 risk factor: the 30-60 min repeat gas is advice for at-risk patients.
      const facts = reviewFacts({ spo2: [[95, 300], [95, 180]], flows: [[2, 300], [4, 180]] });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });

    it('for a Venturi flow raised without a change of setting', () => {
      // A Venturi's FiO2 is its setting; raising its flow for tachypnoea (BTS 2017 Table 4) adds no oxygen.
      const facts = reviewFacts({
        order: { device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 6, target: copdOnCannula.order.target },
        conditions: ['copd'],
        spo2: [[90, 300], [90, 180]],
        flows: [[4, 300], [6, 180]],
      });
      expect(runRule(rule, facts, view)).toStrictEqual([]);
    });
  });
});
