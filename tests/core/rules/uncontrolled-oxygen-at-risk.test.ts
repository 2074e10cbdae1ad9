import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/uncontrolled-oxygen-at-risk.js';
import { activeOrder, bloodGas, buildFacts, condition, oxygenOrder, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const reservoir = oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15, target: { lowPercent: 88, highPercent: 92, readFrom: 'text' } });
const copd = [condition('copd')];

describe('uncontrolled-oxygen-at-risk', () => {
  it('runs on both hooks as a warning by default', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('suggests a 28 % Venturi mask at 4 L/min for a COPD patient ordered a reservoir mask', () => {
    // BTS 2017, Table 4: controlled oxygen for patients at risk of hypercapnic respiratory failure,
    // e.g. a 28 % Venturi mask at 4 L/min; target 88-92 %.
    const facts = buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(90)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 });
    expect(finding.values.advisedRange).toBe('88–92 %');
    const card = expectCardRenders(finding);
    expect(card.label).toBe('Change to Venturi mask 28 % at 4 L/min');
  });

  it('is critical when the current gas already shows hypercapnia', () => {
    // BTS 2017 clarification: hypercapnia is PaCO2 >= 6 kPa.
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 6 })],
      conditions: copd,
      spo2Percent: [spo2(93)],
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.36, paco2Kpa: 6.8, pao2Kpa: 8.2, hco3: 29 })],
    });
    expect(onlyFinding(runRule(rule, facts)).indicator).toBe('critical');
  });

  it.each([
    ['a nasal cannula at 2 L/min', oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 2 })],
    ['a 28 % Venturi mask', oxygenOrder({ device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 })],
  ])('does not fire for a controlled device: %s (BTS 2017, Table 4)', (_name, order) => {
    expect(runRule(rule, buildFacts({ orders: [order], conditions: copd, spo2Percent: [spo2(90)] }))).toStrictEqual([]);
  });

  it('does not fire for a patient not at risk', () => {
    expect(runRule(rule, buildFacts({ orders: [reservoir], spo2Percent: [spo2(84)] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('never offers a Venturi mask to a patient on NIV', () => {
      // BTS 2017 Table 4 advises a Venturi for an at-risk patient on a mask; for a patient on NIV
      // (BTS/ICS 2016) a mask is a step down in support (common practice), so no change is offered.
      const facts = buildFacts({
        conditions: [condition('copd')],
        orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })],
        activeOrders: [activeOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.35 })],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('stays quiet for a critically ill at-risk patient with no gas yet, SpO2 below 85 %', () => {
      // BTS 2017, Table 1: critically ill at-risk patients get high-concentration oxygen until gases
      // are available; BTS 2017, Table 2: the 85 % threshold for a reservoir mask.
      expect(runRule(rule, buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(84)] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(88)] })).length).toBe(1);
    });

    it('stays quiet while SpO2 is below the at-risk range itself: a Venturi mask would cut the oxygen', () => {
      // BTS 2017, Table 4: controlled oxygen to 88-92 %; below 88 % the patient needs more oxygen, not less
      const facts = (sat: number) => buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(sat)] });
      expect(runRule(rule, facts(87))).toStrictEqual([]);
      expect(runRule(rule, facts(88)).length).toBe(1);
    });

    it('is critical once the gas shows hypercapnia, with SpO2 within the at-risk range', () => {
      // BTS 2017, Table 4; hypercapnia PaCO2 >= 6 kPa (BTS 2017 clarification)
      const facts = buildFacts({
        orders: [reservoir],
        conditions: copd,
        spo2Percent: [spo2(90)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.3, paco2Kpa: 7.5, pao2Kpa: 6.9, hco3: 32 })],
      });
      expect(onlyFinding(runRule(rule, facts)).indicator).toBe('critical');
    });

    it('does not fire after BTS re-targeting to the standard range (normal PaCO2, no previous failure)', () => {
      // BTS 2017, Tables 2-4: at-risk patient with a normal PaCO2 and no previous NIV -> 94-98 %.
      const facts = buildFacts({
        orders: [reservoir],
        conditions: copd,
        spo2Percent: [spo2(92)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.42, paco2Kpa: 5.1, pao2Kpa: 8.0, hco3: 24 })],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });
});
