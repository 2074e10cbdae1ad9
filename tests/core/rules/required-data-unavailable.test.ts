import { describe, expect, it } from 'vitest';
import { CONTEXT_ONLY_DATA, rule } from '../../../src/core/rules/required-data-unavailable.js';
import { PREFETCH_KEYS } from '../../../src/cds/services.js';
import { buildFacts } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

describe('required-data-unavailable', () => {
  it('runs on order-sign and patient-view as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign', 'patient-view']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('names the data that could not be retrieved', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ missingData: ['bloodGases', 'conditions'] })));
    expect(finding.values).toStrictEqual({ missingCount: '2', missingList: 'bloodGases, conditions' });
    expect(expectCardRenders(finding).summary).toBe('Check was partial: 2 data source(s) could not be retrieved');
  });

  describe('on patient-view', () => {
    const view = { hook: 'patient-view' as const };
    it('names the orders on record when they could not be read, even with no oxygen order found', () => {
      // The active oxygen order is the review's subject: without the orders, a quiet review means little
      // (common practice: transparency of decision support).
      const facts = buildFacts({ orders: [], missingData: ['medicationRequests', 'deviceRequests'] });
      expect(onlyFinding(runRule(rule, facts, view)).values.missingList).toBe('medicationRequests, deviceRequests');
    });

    it('stays quiet for a patient with no oxygen order when only other data was missing', () => {
      // patient-view fires on every record opened; the review does not apply without an oxygen order.
      expect(runRule(rule, buildFacts({ orders: [], missingData: ['conditions'] }), view)).toStrictEqual([]);
    });

    it('does not count the encounter, which only names the ward', () => {
      expect(runRule(rule, buildFacts({ missingData: ['encounter'] }), view)).toStrictEqual([]);
    });
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
