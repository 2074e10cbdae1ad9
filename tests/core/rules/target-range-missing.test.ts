import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/target-range-missing.js';
import type { ConditionKind } from '../../../src/core/types.js';
import { TSANZ, buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const noTarget = [oxygenOrder({ target: undefined })];

describe('target-range-missing', () => {
  it('runs on both hooks as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('suggests the standard range for an order without a target', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: noTarget })));
    // BTS 2017, Tables 1-3: 94-98 %
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } });
    expect(finding.values).toStrictEqual({
      orderDescription: 'Nasal cannula at 2 L/min',
      advisedRange: '94–98 %',
      targetReason: 'no documented risk of hypercapnic respiratory failure',
    });
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('No target SpO2 range on this oxygen order: 94–98 % suggested');
    expect(card.label).toBe('Add target 94–98 %');
  });

  it.each<[string, ConditionKind[], number, number]>([
    ['no risk', [], 94, 98], // BTS 2017, Tables 1-3
    ['COPD', ['copd'], 88, 92], // BTS 2017, Table 4
    ['cystic fibrosis', ['cystic-fibrosis'], 88, 92], // BTS 2017, Table 4
  ])('suggests the applicable range for %s', (_, kinds, low, high) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: noTarget, conditions: kinds.map(condition) })));
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: low, highPercent: high } });
    expectCardRenders(finding);
  });

  it('suggests 92-96 % under the TSANZ preset', () => {
    // TSANZ 2015: 92-96 % for most acute medical patients
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: noTarget }), { policy: TSANZ }));
    expect(finding.values.advisedRange).toBe('92–96 %');
  });

  it('does not fire when the order has a target', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('leaves carbon monoxide, pneumothorax and paraquat to their own rules', () => {
      for (const kind of ['carbon-monoxide-poisoning', 'pneumothorax', 'paraquat-poisoning'] as const) {
        expect(runRule(rule, buildFacts({ orders: noTarget, conditions: [condition(kind)] }))).toStrictEqual([]);
      }
    });

    it('does not fire without an order', () => {
      expect(runRule(rule, buildFacts({ orders: [] }))).toStrictEqual([]);
    });
  });
});
