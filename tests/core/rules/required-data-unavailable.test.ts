import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/required-data-unavailable.js';
import { buildFacts } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

describe('required-data-unavailable', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('names the data that could not be retrieved', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ missingData: ['bloodGases', 'conditions'] })));
    expect(finding.values).toStrictEqual({ missingCount: '2', missingList: 'bloodGases, conditions' });
    expect(expectCardRenders(finding).summary).toBe('Check was partial: 2 data source(s) could not be retrieved');
  });

  it('does not fire when everything arrived', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('fires without an order too', () => {
      expect(onlyFinding(runRule(rule, buildFacts({ orders: [], missingData: ['patient'] }))).orderReference).toBeUndefined();
    });
  });
});
