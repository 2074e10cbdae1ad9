import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/spo2-above-target.js';
import { activeOrder, bloodGas, buildFacts, condition, fio2, o2Flow, oxygenOrder, respRate, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';
import { policyWithDevices, venturiLines } from '../devices/catalogue-policy.js';

const atRiskOrder = [oxygenOrder({ flowLPerMin: 2, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })];

describe('spo2-above-target', () => {
  it('runs on order-sign as information by default', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('suggests one litre less on a nasal cannula when SpO2 is above 98 % on oxygen', () => {
    // BTS 2017: reduce oxygen when above the target range (94-98 %, Tables 1-3); BMJ 2018: SpO2 <= 96 %
    const facts = buildFacts({
      orders: [oxygenOrder({ flowLPerMin: 3 })],
      spo2Percent: [spo2(99, 15)],
      o2FlowLPerMin: [o2Flow(3, 15)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('info');
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
    expect(finding.sourceKeys).toStrictEqual(['bts-2017', 'bmj-2018']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('SpO2 99 % (15 min ago) is above the target 94–98 % on oxygen: consider stepping down');
    expect(card.label).toBe('Reduce flow to 2 L/min');
  });

  it('warns for an at-risk patient above 92 %', () => {
    // BTS 2017, Table 4 (88-92 %); Echevarria 2021: SpO2 > 92 % linked with higher COPD mortality
    const facts = buildFacts({ orders: atRiskOrder, conditions: [condition('copd')], spo2Percent: [spo2(95)], fio2Fraction: [fio2(0.28)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.values.targetRange).toBe('88–92 %');
    expectCardRenders(finding);
  });

  it.each([
    [92, false], // at the upper bound of 88-92 %: in range (BTS 2017, Table 4)
    [93, true], // one point above: above the range
  ])('treats SpO2 %s %% against 88-92 %% as above: %s', (value, fires) => {
    const facts = buildFacts({ orders: atRiskOrder, conditions: [condition('copd')], spo2Percent: [spo2(value)], fio2Fraction: [fio2(0.28)] });
    expect(runRule(rule, facts).length).toBe(fires ? 1 : 0);
  });

  it('steps an at-risk patient down against 88-92 % when 94-98 % was ordered', () => {
    // BTS 2017, Table 4: the at-risk range applies; the ordered 94-98 % is flagged by its own rule.
    const facts = buildFacts({
      orders: [oxygenOrder({ flowLPerMin: 3, target: { lowPercent: 94, highPercent: 98, readFrom: 'text' } })],
      conditions: [condition('chest-wall-deformity')],
      spo2Percent: [spo2(93)],
      o2FlowLPerMin: [o2Flow(3, 15)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.targetRange).toBe('88–92 %');
    expect(finding.values.targetSource).toContain('advised range');
    expectCardRenders(finding);
  });

  it('does not fire for a reading taken on air', () => {
    const facts = buildFacts({ spo2Percent: [spo2(99)], fio2Fraction: [fio2(0.21)] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  describe('no step down while the gas shows hypercapnic acidosis', () => {
    // 3 L/min on a nasal cannula with SpO2 above the range: a step down would be offered otherwise
    const onCannula = (parts: Parameters<typeof buildFacts>[0]) =>
      buildFacts({ orders: [oxygenOrder({ flowLPerMin: 3 })], o2FlowLPerMin: [o2Flow(3, 15)], ...parts });

    it('offers no step down to a tiring asthmatic above 98 %, and keeps the card', () => {
      // pH 7.27 < 7.35 (RCEM), PaCO2 7.8 kPa >= 6 kPa (BTS 2017 clarification), HCO3 25 within the acute rise
      const facts = onCannula({
        conditions: [condition('acute-asthma')],
        spo2Percent: [spo2(99, 15)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.27, paco2Kpa: 7.8, hco3: 25 })],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expect(expectCardRenders(finding).label).toBeUndefined();
    });

    it('offers no step down in acute-on-chronic acidosis either', () => {
      // COPD, pH 7.30, PaCO2 8.6 kPa, HCO3 31 (check-values 3g); 88-92 % (BTS 2017, Table 4)
      const facts = onCannula({
        orders: [oxygenOrder({ flowLPerMin: 3, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
        conditions: [condition('copd')],
        spo2Percent: [spo2(95, 15)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.3, paco2Kpa: 8.6, hco3: 31 })],
      });
      expect(onlyFinding(runRule(rule, facts)).change).toBeUndefined();
    });

    it('still steps a compensated retainer down', () => {
      // pH 7.38 in range (RCEM): chronic compensated; BTS 2017: reduce oxygen above the range
      const facts = onCannula({
        orders: [oxygenOrder({ flowLPerMin: 3, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
        conditions: [condition('copd')],
        spo2Percent: [spo2(95, 15)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.38, paco2Kpa: 7.4, hco3: 32 })],
      });
      expect(onlyFinding(runRule(rule, facts)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
    });
  });

  describe('edge cases', () => {
    it('does not fire for a new order when nothing shows the patient was on oxygen', () => {
      // A high SpO2 before the first oxygen order says nothing about titration.
      expect(runRule(rule, buildFacts({ spo2Percent: [spo2(99)] }))).toStrictEqual([]);
    });

    it('assumes oxygen when an oxygen order is already active on record', () => {
      const facts = buildFacts({ spo2Percent: [spo2(99)], activeOrders: [activeOrder()] });
      expect(onlyFinding(runRule(rule, facts)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 1 });
    });

    it('offers no step below the nasal cannula minimum of 1 L/min', () => {
      // BTS 2017, Tables 2 and 4: nasal cannula 1-6 L/min
      const facts = buildFacts({ orders: [oxygenOrder({ flowLPerMin: 1 })], spo2Percent: [spo2(99)], o2FlowLPerMin: [o2Flow(1)] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expect(finding.values.suggestedFlow).toBeUndefined();
      expectCardRenders(finding);
    });

    it('offers no step for devices whose next step is not a flow change', () => {
      const facts = buildFacts({
        conditions: [condition('copd')],
        orders: [oxygenOrder({ device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
        spo2Percent: [spo2(96)],
        fio2Fraction: [fio2(0.28)],
      });
      expect(onlyFinding(runRule(rule, facts)).change).toBeUndefined();
    });

    it('stays quiet when the order already lowers the running flow', () => {
      // The order is itself the step down BTS 2017 advises above target: a card would only repeat it.
      const facts = buildFacts({ orders: [oxygenOrder({ flowLPerMin: 2 })], spo2Percent: [spo2(99)], o2FlowLPerMin: [o2Flow(4)] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('stays quiet when the order steps a reservoir mask down from the 15 L/min order on record', () => {
      // reservoir mask 10-15 L/min (BTS 2008; BTS 2017 Table 2); 10 L/min delivers less than 15
      const facts = buildFacts({
        orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 10 })],
        activeOrders: [activeOrder({ device: 'reservoir-mask', flowLPerMin: 15 })],
        spo2Percent: [spo2(99)],
        respRatePerMin: [respRate(20)],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('stays quiet when the order sets a lower FiO2 than the one recorded at the reading', () => {
      const facts = buildFacts({
        orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.4 })],
        spo2Percent: [spo2(99)],
        fio2Fraction: [fio2(0.6)],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('still fires when the order keeps the FiO2 recorded at the reading', () => {
      const facts = buildFacts({
        orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.6 })],
        spo2Percent: [spo2(99)],
        fio2Fraction: [fio2(0.6)],
      });
      expect(runRule(rule, facts)).toHaveLength(1);
    });

    it('does not advise a step down to 88-92 % for a patient re-targeted to 94-98 % after a normal gas', () => {
      // BTS 2017, Tables 2-4: PaCO2 normal and no previous NIV/IMV, so 94-98 % applies and the
      // re-targeting card says so; SpO2 93 % is within neither 88-92 % nor above 94-98 %.
      const facts = buildFacts({
        orders: [oxygenOrder({ flowLPerMin: 3, target: { lowPercent: 88, highPercent: 92, readFrom: 'text' } })],
        conditions: [condition('copd')],
        bloodGases: [bloodGas({ ageMinutes: 60, ph: 7.42, paco2Kpa: 5.0, pao2Kpa: 9.0 })],
        spo2Percent: [spo2(93)],
        o2FlowLPerMin: [o2Flow(3)],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it.each([
      [93, 0], // above the ordered 88-92 % but below the 94-98 % that applies (BTS 2017, Tables 1-3): no step down
      [96, 0], // within 94-98 % (BTS 2017, Tables 1-3)
      [98, 0], // the upper bound of 94-98 % (BTS 2017, Tables 1-3)
      [99, 1], // above 94-98 % as well: a step down is advised (BTS 2017, weaning above the range)
    ])('judges SpO2 %s %% on 88-92 %% ordered with no documented risk against 94-98 %%: %s card(s)', (value, cards) => {
      const facts = buildFacts({
        orders: [oxygenOrder({ flowLPerMin: 2, target: { lowPercent: 88, highPercent: 92, readFrom: 'text' } })],
        spo2Percent: [spo2(value)],
        o2FlowLPerMin: [o2Flow(2)],
      });
      const findings = runRule(rule, facts);
      expect(findings).toHaveLength(cards);
      for (const finding of findings) {
        expect(finding.values.targetRange).toBe('94–98 %'); // BTS 2017, Tables 1-3
        expect(finding.values.targetSource).toBe('the range that applies (the lower 88–92 % ordered has no documented reason)');
        expectCardRenders(finding);
      }
    });

    it.each([
      [96, 0], // within the policy 94-98 % that target-differs-from-policy offers (BTS 2017 Tables 1-3)
      [99, 1], // above 94-98 % as well: a step down is advised whichever range applies
    ])('judges SpO2 %s %% on a 90-94 %% order for a patient without risk: %s card(s)', (value, cards) => {
      const facts = buildFacts({
        orders: [oxygenOrder({ target: { lowPercent: 90, highPercent: 94, readFrom: 'text' } })],
        spo2Percent: [spo2(value)],
        o2FlowLPerMin: [o2Flow(2)],
      });
      expect(runRule(rule, facts)).toHaveLength(cards);
    });

    it('stays quiet where no SpO2 target applies', () => {
      const facts = buildFacts({ conditions: [condition('carbon-monoxide-poisoning')], spo2Percent: [spo2(100)], activeOrders: [activeOrder()] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });
});

describe('spo2-above-target with a hospital device catalogue', () => {
  // Invented local limits: cannulae from 2 L/min (inside BTS 2017's 1-6 L/min, Tables 2 and 4)
  const policy = policyWithDevices([
    'devices:',
    '  nasal-cannula: { flowLPerMin: { from: 2, to: 6 } }',
    '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }',
    ...venturiLines([[28, 4]]),
  ]);
  const above = (flow: number) => buildFacts({ orders: [oxygenOrder({ flowLPerMin: flow })], spo2Percent: [spo2(99)], o2FlowLPerMin: [o2Flow(flow)] });

  it("steps down to the hospital's lowest cannula flow and no further", () => {
    // BTS 2017: reduce oxygen above 94-98 %; one step of 1 L/min (common practice)
    expect(onlyFinding(runRule(rule, above(3), { policy })).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 2 });
    expect(onlyFinding(runRule(rule, above(2), { policy })).change).toBeUndefined();
    // Under the preset 2 L/min still steps to 1 L/min (BTS 2017, Tables 2 and 4: from 1 L/min)
    expect(onlyFinding(runRule(rule, above(2))).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 1 });
  });
});
