import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/target-differs-from-policy.js';
import { TSANZ, buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const ordered = (low: number, high: number) => [oxygenOrder({ target: { lowPercent: low, highPercent: high, readFrom: 'structured' } })];

describe('target-differs-from-policy', () => {
  it('runs on both hooks as information', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('names the policy range when 90-94 % is ordered for a patient without risk', () => {
    // BTS 2017, Tables 1-3: 94-98 %
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: ordered(90, 94) })));
    expect(finding.values.orderedRange).toBe('90–94 %');
    expect(finding.values.advisedRange).toBe('94–98 %');
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } });
    expect(expectCardRenders(finding).summary).toBe('Target 90–94 % differs from the policy range 94–98 %');
  });

  it.each([
    [94, 98, 'BTS 2017 range under the TSANZ preset (TSANZ 2015: 92-96 %)'],
    [90, 94, 'a non-standard range'],
  ])('fires for %s-%s %% under TSANZ (%s)', (low, high) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: ordered(low, high) }), { policy: TSANZ }));
    expect(finding.values.advisedRange).toBe('92–96 %');
    expectCardRenders(finding);
  });

  it('fires for a range below the at-risk range in an at-risk patient', () => {
    // BTS 2017, Table 4: 88-92 %
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: ordered(85, 90), conditions: [condition('copd')] })));
    expect(finding.values.advisedRange).toBe('88–92 %');
  });

  it('does not fire for a matching range', () => {
    expect(runRule(rule, buildFacts({ orders: ordered(94, 98) }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('leaves ranges owned by the more specific rules alone', () => {
      expect(runRule(rule, buildFacts({ orders: ordered(94, 98), conditions: [condition('copd')] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: ordered(88, 92) }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: ordered(94, 98), conditions: [condition('paraquat-poisoning')] }))).toStrictEqual([]);
    });
  });
});
