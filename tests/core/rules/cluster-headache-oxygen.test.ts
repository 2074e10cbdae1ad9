import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/cluster-headache-oxygen.js';
import { activeOrder, buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const cluster = [condition('cluster-headache')];

describe('cluster-headache-oxygen', () => {
  it('runs on both hooks as information', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('suggests a reservoir mask for a nasal cannula order', () => {
    // BTS 2017 (V2): 12-15 L/min by non-rebreathing reservoir mask, exempt from the SpO2 target
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: cluster })));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 12 });
    expect(finding.values.advisedFlow).toBe('12–15 L/min');
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Cluster headache: oxygen at 12–15 L/min by reservoir mask, regardless of SpO2');
  });

  it.each([
    [10, 12], // below 12 L/min: raise to 12 (BTS 2017, V2)
    [12, undefined], // in range
    [15, undefined],
  ])('for a reservoir mask at %s L/min suggests %s L/min', (flow, suggested) => {
    const facts = buildFacts({ conditions: cluster, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: flow, target: undefined })] });
    const findings = runRule(rule, facts);
    if (suggested === undefined) {
      expect(findings).toStrictEqual([]);
    } else {
      expect(onlyFinding(findings).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: suggested });
    }
  });

  it('notes an SpO2 target on an otherwise right order, without a change', () => {
    const facts = buildFacts({ conditions: cluster, orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.orderedTarget).toBe('94–98 %');
    expect(finding.change).toBeUndefined();
    expectCardRenders(finding);
  });

  describe('edge cases', () => {
    it('never offers a reservoir mask to a patient on high flow', () => {
      // BTS 2017 (V2): reservoir mask at 12-15 L/min; a mask would be a step down from high flow (common practice)
      const facts = buildFacts({
        conditions: [condition('cluster-headache')],
        orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 4, target: undefined })],
        activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: 0.4 })],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('does not fire when the patient is at risk of hypercapnia (the at-risk range applies)', () => {
      expect(runRule(rule, buildFacts({ conditions: [...cluster, condition('copd')] }))).toStrictEqual([]);
    });
  });
});
