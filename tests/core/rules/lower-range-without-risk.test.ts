import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/lower-range-without-risk.js';
import { TSANZ, bloodGas, buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders, loadCardTemplate } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const lowRange = [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })];

describe('lower-range-without-risk', () => {
  it('runs on both hooks as information', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('offers the standard range when 88-92 % is ordered with no documented risk', () => {
    // BTS 2017, Tables 1-3: 94-98 % for patients not at risk
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: lowRange })));
    expect(finding.indicator).toBe('info');
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } });
    expect(finding.values.riskReasons).toBe('none documented');
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Target 88–92 % ordered, but 94–98 % applies: no hypercapnic risk is documented');
  });

  it('offers an override for a patient-specific target or alert card', () => {
    expect(loadCardTemplate(rule.id).overrideReasons.map((r) => r.code)).toContain('patient-specific-target');
  });

  it('warns after a normal gas in an at-risk patient with no previous failure', () => {
    // BTS 2017, Tables 2-4: re-target to 94-98 % when PaCO2 is normal and no previous NIV/IMV
    const facts = buildFacts({
      orders: lowRange,
      conditions: [condition('copd')],
      bloodGases: [bloodGas({ ageMinutes: 50, ph: 7.41, paco2Kpa: 5.4, pao2Kpa: 8.9 })],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.advisedRange).toBe('94–98 %');
    const card = expectCardRenders(finding);
    // BTS 2017, Tables 2-4 (re-targeting). The risk is documented (COPD), so the card must not say
    // it is not: it names the normal gas (hypercapnia at 6 kPa, BTS 2017 clarification).
    expect(card.summary).toBe(
      'Target 88–92 % ordered, but 94–98 % applies: the current gas shows PCO2 below 6 kPa, ' +
        'with no previous NIV or hypercapnic failure',
    );
    expect(finding.values.riskReasons).not.toBe('none documented');
  });

  it('uses the TSANZ standard range under the TSANZ preset', () => {
    // TSANZ 2015: 92-96 %
    expect(onlyFinding(runRule(rule, buildFacts({ orders: lowRange }), { policy: TSANZ })).values.advisedRange).toBe('92–96 %');
  });

  it('does not fire when a risk is documented', () => {
    expect(runRule(rule, buildFacts({ orders: lowRange, conditions: [condition('bronchiectasis')] }))).toStrictEqual([]);
  });

  it('says the raised PCO2 is acute when a tiring asthmatic has 88-92 % ordered', () => {
    // Acute asthma, pH 7.27 (RCEM < 7.35), PaCO2 7.8 kPa (BTS 2017 clarification >= 6 kPa), HCO3 25
    // within the acute rise (check-values 3g): BTS 2017 keeps acute asthma at 94-98 %
    const facts = buildFacts({
      orders: lowRange,
      conditions: [condition('acute-asthma')],
      bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.27, paco2Kpa: 7.8, hco3: 25 })],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } });
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Target 88–92 % ordered, but 94–98 % applies: the raised PCO2 is acute, with no sign of chronic CO2 retention');
  });

  describe('edge cases', () => {
    it('keeps quiet after a normal gas when there was previous NIV', () => {
      // BTS 2017, Tables 2-4: previous NIV/IMV stays at 88-92 %
      const facts = buildFacts({
        orders: lowRange,
        conditions: [condition('copd'), condition('previous-niv-or-imv')],
        bloodGases: [bloodGas({ ageMinutes: 50, ph: 7.41, paco2Kpa: 5.4 })],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('leaves other lower ranges to target-differs-from-policy', () => {
      const facts = buildFacts({ orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 94, readFrom: 'structured' } })] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });
});
