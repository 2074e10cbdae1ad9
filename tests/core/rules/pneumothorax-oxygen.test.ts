import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/pneumothorax-oxygen.js';
import { activeOrder, buildFacts, condition, o2Flow, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const pneumothorax = [condition('pneumothorax')];

describe('pneumothorax-oxygen', () => {
  it('runs on both hooks as information', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('suggests a reservoir mask at 15 L/min for a nasal cannula order', () => {
    // BTS 2017, Table 2 (recs F5-F6): observation without drainage -> reservoir mask 15 L/min, aim 100 %
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: pneumothorax })));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 15 });
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Pneumothorax under observation: BTS 2017 advises a reservoir mask at 15 L/min, aiming for 100 %');
  });

  it.each<[string, Parameters<typeof oxygenOrder>[0], string | undefined]>([
    // BTS 2017, Table 2: reservoir mask at 15 L/min, aim for 100 %
    ['simple face mask 6 L/min', { device: 'simple-face-mask', flowLPerMin: 6, target: undefined }, 'set-device'],
    ['Venturi 28 % at 4 L/min', { device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 4, target: undefined }, 'set-device'],
    ['reservoir mask 10 L/min', { device: 'reservoir-mask', flowLPerMin: 10, target: undefined }, 'set-flow'],
  ])('for %s suggests %s', (_, parts, kind) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: pneumothorax, orders: [oxygenOrder(parts)] })));
    expect(finding.change?.kind).toBe(kind);
    expect(finding.change !== undefined && 'flowLPerMin' in finding.change && finding.change.flowLPerMin).toBe(15);
    expectCardRenders(finding);
  });

  it('raises a reservoir mask below 15 L/min', () => {
    const facts = buildFacts({ conditions: pneumothorax, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 10, target: undefined })] });
    expect(onlyFinding(runRule(rule, facts)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 15 });
  });

  it('does not fire for a reservoir mask at 15 L/min without a target', () => {
    const facts = buildFacts({ conditions: pneumothorax, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15, target: undefined })] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('never offers a reservoir mask to a patient on high flow or NIV', () => {
      // BTS 2017 Table 2 advises the reservoir mask; taking a patient off high flow or NIV onto a mask
      // is a step down in support (common practice), so the card advises without the change.
      const onHighFlow = buildFacts({
        conditions: [condition('pneumothorax')],
        orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 2, target: undefined })],
        activeOrders: [activeOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.4 })],
      });
      expect(onlyFinding(runRule(rule, onHighFlow)).change).toBeUndefined();
      const recordedHighFlow = buildFacts({
        conditions: [condition('pneumothorax')],
        orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: 0.5, target: undefined })],
        o2FlowLPerMin: [o2Flow(40)], // 40 L/min: only high flow reaches it (check-values 2a)
      });
      const finding = onlyFinding(runRule(rule, recordedHighFlow));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('notes a target on an otherwise right order', () => {
      const facts = buildFacts({ conditions: pneumothorax, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('does not fire when the patient is at risk of hypercapnia', () => {
      expect(runRule(rule, buildFacts({ conditions: [...pneumothorax, condition('cystic-fibrosis')] }))).toStrictEqual([]);
    });
  });
});
