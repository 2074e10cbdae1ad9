import { describe, expect, it } from 'vitest';
import { CONTEXT_ONLY_DATA, rule } from '../../../src/core/rules/required-data-unavailable.js';
import { PREFETCH_KEYS } from '../../../src/cds/services.js';
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

  // The partial-check card appears only when a missing input could change a finding (issue 6 class 12;
  // common practice: alert fatigue is a harm). The class: data that feeds no finding raises no card,
  // alone or in any combination; data a finding reads raises it, whatever context data is missing too.
  describe('only when the missing data could change a finding', () => {
    const contextOnlyCombinations = [
      ['encounter'],
      ['medicationRequests'],
      ['serviceRequests'],
      ['encounter', 'medicationRequests', 'serviceRequests'],
      ['medicationRequests (incomplete: more results than could be read)'],
    ];
    it.each(contextOnlyCombinations)('raises no card when only context data is missing (%#)', (...missing: string[]) => {
      expect(runRule(rule, buildFacts({ missingData: missing }))).toStrictEqual([]);
    });

    it.each([['observations (incomplete: more results than could be read)'], ['conditions'], ['an-unknown-source']])(
      'names data a finding reads, and only that, when context data is missing too (%s)',
      (matters) => {
        const finding = onlyFinding(runRule(rule, buildFacts({ missingData: ['encounter', matters, 'serviceRequests'] })));
        expect(finding.values).toStrictEqual({ missingCount: '1', missingList: matters });
      },
    );

    it('lists as context-only only prefetch keys the service declares and does not require', () => {
      // A renamed key would otherwise silently count as data that matters, or a required key be ignored.
      for (const name of CONTEXT_ONLY_DATA) {
        expect(Object.hasOwn(PREFETCH_KEYS, name)).toBe(true);
        expect(PREFETCH_KEYS[name as keyof typeof PREFETCH_KEYS].required).toBe(false);
      }
    });
  });

  describe('edge cases', () => {
    it('fires without an order too', () => {
      expect(onlyFinding(runRule(rule, buildFacts({ orders: [], missingData: ['patient'] }))).orderReference).toBeUndefined();
    });
  });
});
