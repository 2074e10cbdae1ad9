import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/target-range-missing.js';
import type { ConditionKind } from '../../../src/core/types.js';
import { TSANZ, buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { orderFromWords } from './order-from-words.js';
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

  describe('orders that are not titrations to a target', () => {
    it.each([
      'for comfort, no SpO2 target',
      'palliative: titrate to comfort, do not monitor sats',
      'End of life care, oxygen for comfort only',
      '2L NC for breathlessness; no sats target',
      'Target: none',
      'Stop oxygen',
      'discontinue O2',
    ])('does not fire, nor offer a target, for "%s"', (text) => {
      // BTS 2017: in terminal palliative care oxygen is for comfort (from memory); a stop or room-air
      // order gives nothing to titrate (common practice)
      expect(runRule(rule, buildFacts({ orders: [orderFromWords(text)] }))).toStrictEqual([]);
    });

    it.each([['room air', 'none'], ['Oxygen 0 L/min', 0]] as const)('does not fire for a room-air order: "%s"', (text, flow) => {
      // common practice: room air, or 0 L/min, gives no oxygen to titrate
      expect(runRule(rule, buildFacts({ orders: [orderFromWords(text, {}, flow)] }))).toStrictEqual([]);
    });

    it('does not fire for an order whose FHIR status says it has stopped', () => {
      const stopped = orderFromWords('2 L/min via nasal cannula', { status: 'stopped' }); // FHIR R4 status
      expect(runRule(rule, buildFacts({ orders: [stopped] }))).toStrictEqual([]);
    });

    it('still fires for a weaning order, which is titrated down against a target', () => {
      // BTS 2017, from memory: oxygen is weaned while SpO2 stays in the target range
      const finding = onlyFinding(runRule(rule, buildFacts({ orders: [orderFromWords('wean O2 as tolerated')] })));
      expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } });
      expectCardRenders(finding);
    });

    it('leaves one bound, and two ranges, to their own rules', () => {
      for (const text of ['SpO2 > 94%', '88–92 % if drowsy, otherwise 94–98 %', 'sats not below 88 and not below 90']) {
        expect(runRule(rule, buildFacts({ orders: [orderFromWords(text)] }))).toStrictEqual([]);
      }
    });
  });
});
