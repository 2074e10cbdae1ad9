import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/target-one-sided.js';
import { rule as targetRangeMissing } from '../../../src/core/rules/target-range-missing.js';
import { TSANZ, bloodGas, buildFacts, condition } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { orderFromWords } from './order-from-words.js';
import { onlyFinding, runRule } from './run-rule.js';

const STANDARD = { lowPercent: 94, highPercent: 98 }; // BTS 2017, Tables 1-3
const AT_RISK = { lowPercent: 88, highPercent: 92 }; // BTS 2017, Table 4

const facts = (text: string, extra: Parameters<typeof buildFacts>[0] = {}) =>
  buildFacts({ orders: [orderFromWords(text)], ...extra });
const copd = { conditions: [condition('copd')] }; // BTS 2017, Table 4: COPD puts a patient at risk

describe('target-one-sided', () => {
  it('runs on both hooks as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  // Lower bounds the standard range keeps (94-98 %, BTS 2017 Tables 1-3): a full range is suggested.
  it.each([
    'SpO2 > 94%',
    'SpO2 >94 %',
    'keep sats above 92',
    'maintain saturations over 90%',
    '≥ 92 %',
    'SpO2 >= 94%',
    'at least 92%',
    'aim for sats of at least 94 percent',
    'sats not below 88',
    'keep SpO2 not less than 90 %',
  ])('advises a full range for "%s", suggesting the standard range', (text) => {
    const finding = onlyFinding(runRule(rule, facts(text)));
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: STANDARD });
    expect(finding.indicator).toBe('warning');
    const card = expectCardRenders(finding);
    expect(card.label).toBe('Replace the bound with target 94–98 %');
    expect(finding.values.writtenText).toBe(text);
    // one card per problem: the missing-target card stays quiet
    expect(runRule(targetRangeMissing, facts(text))).toStrictEqual([]);
  });

  // Bounds the policy range would break: no suggestion, and the card says why.
  it.each([
    ['aim SpO2 ≥ 96%', STANDARD], // 96 is above the low end of 94-98 % (BTS 2017 Tables 1-3)
    ['keep sats no higher than 92', STANDARD], // an upper bound below 98 %
    ['SpO2 < 95%', STANDARD],
    ['keep sats above 90', AT_RISK], // 90 is above the low end of 88-92 % (BTS 2017 Table 4)
  ] as const)('offers no change for "%s", and says why', (text, advised) => {
    const at = advised === AT_RISK ? copd : {};
    const finding = onlyFinding(runRule(rule, facts(text, at)));
    expect(finding.change).toBeUndefined();
    expect(finding.values.advisedRange).toBe(`${advised.lowPercent}–${advised.highPercent} %`);
    expect(finding.values.suggestionNote).toMatch(/No one-click change is offered/);
    expectCardRenders(finding);
  });

  it.each(['sats > 88%', 'SpO2 at least 88%', 'SpO2 ≤ 92%', 'keep saturations below 93 %'])(
    'suggests the at-risk range when the bound fits it: %s',
    (text) => {
      // BTS 2017, Table 4: 88-92 % for COPD
      const finding = onlyFinding(runRule(rule, facts(text, copd)));
      expect(finding.change).toStrictEqual({ kind: 'set-target', range: AT_RISK });
      expectCardRenders(finding);
    },
  );

  it.each(['SpO2 > 94%', 'keep sats above 94', 'at least 95%'])(
    'warns that "%s" asks for more oxygen than the at-risk range, without a suggestion',
    (text) => {
      // BTS 2017, Table 4: 88-92 %; a floor of 94 % or more lies above the whole range
      const finding = onlyFinding(runRule(rule, facts(text, copd)));
      expect(finding.change).toBeUndefined();
      expect(finding.indicator).toBe('warning');
      expect(finding.values.suggestionNote).toMatch(/more oxygen than BTS 2017 advises/);
      expectCardRenders(finding);
    },
  );

  it('is critical when that at-risk patient’s current gas already shows hypercapnia', () => {
    // PaCO2 >= 6 kPa is hypercapnia (BTS 2017 clarification, check-values); 7.1 kPa is above it
    const gas = bloodGas({ ageMinutes: 60, ph: 7.33, paco2Kpa: 7.1, pao2Kpa: 7.9, hco3: 30 });
    const finding = onlyFinding(runRule(rule, facts('SpO2 > 94%', { ...copd, bloodGases: [gas] })));
    expect(finding.indicator).toBe('critical');
    expectCardRenders(finding);
  });

  it('suggests the preset’s range under TSANZ', () => {
    // TSANZ 2015: 92-96 %; "above 92" fits it
    const finding = onlyFinding(runRule(rule, facts('keep sats above 92'), { policy: TSANZ }));
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 92, highPercent: 96 } });
  });

  describe('a target written as one value', () => {
    // BTS 2017 asks for a target range; one value ("target SpO2 94%") is neither a range nor a floor.
    it.each([
      ['target SpO2 94%', STANDARD, {}], // 94 lies in 94-98 % (BTS 2017, Tables 1-3)
      ['aim sats 96', STANDARD, {}], // 96 lies in 94-98 % (BTS 2017, Tables 1-3)
      ['target SpO2 90%', AT_RISK, copd], // 90 lies in 88-92 % for COPD (BTS 2017, Table 4)
    ] as const)('advises a full range for "%s" and offers the range that holds it', (text, advised, at) => {
      const finding = onlyFinding(runRule(rule, facts(text, at)));
      expect(finding.change).toStrictEqual({ kind: 'set-target', range: advised });
      const card = expectCardRenders(finding);
      expect(card.summary).toMatch(/one value/);
      expect(card.label).toMatch(/^Replace the value with target/);
      // one card per problem: the missing-target card does not add a second target
      expect(runRule(targetRangeMissing, facts(text, at))).toStrictEqual([]);
    });

    it.each([
      ['target SpO2 92%', STANDARD, {}], // 92 is below 94-98 % (BTS 2017, Tables 1-3)
      ['target SpO2 99%', STANDARD, {}], // 99 is above 94-98 %
    ] as const)('offers no change for "%s", which the range would not hold, and says why', (text, advised, at) => {
      const finding = onlyFinding(runRule(rule, facts(text, at)));
      expect(finding.change).toBeUndefined();
      expect(finding.values.advisedRange).toBe(`${advised.lowPercent}–${advised.highPercent} %`);
      expect(finding.values.suggestionNote).toMatch(/would not keep the value written/);
      expectCardRenders(finding);
    });

    it('warns that one value above the at-risk range asks for more oxygen than advised', () => {
      // BTS 2017, Table 4: 88-92 % for COPD; 94 % lies above the whole range
      const finding = onlyFinding(runRule(rule, facts('target SpO2 94%', copd)));
      expect(finding.change).toBeUndefined();
      expect(finding.values.suggestionNote).toMatch(/more oxygen than BTS 2017 advises/);
    });

    it('names the guideline the policy cites for the rule: TSANZ 2015 under the TSANZ preset', () => {
      // TSANZ 2015 (Respirology 20:1182, from memory): 88-92 % for CO2 retainers; 94 % lies above it
      const finding = onlyFinding(runRule(rule, facts('target SpO2 94%', copd), { policy: TSANZ }));
      expect(finding.values.suggestionNote).toMatch(/more oxygen than TSANZ 2015 advises/);
      expect(finding.values.suggestionNote).not.toMatch(/BTS/);
    });
  });

  describe('does not fire', () => {
    it.each([
      'target SpO2 94-98%', // a full range, BTS 2017 Tables 1-3
      'keep sats above 94 and below 98', // two bounds make the range
      'if SpO2 below 85 % call doctor', // a trigger, not a target
      '2 L/min via nasal cannula', // no target at all: target-range-missing owns it
      'palliative, keep sats above 88, for comfort', // comfort oxygen (BTS 2017, from memory)
    ])('for "%s"', (text) => {
      expect(runRule(rule, facts(text))).toStrictEqual([]);
    });

    it('for a stopped order, or where no SpO2 target applies', () => {
      const stopped = buildFacts({ orders: [orderFromWords('SpO2 > 94%', { status: 'stopped' })] });
      expect(runRule(rule, stopped)).toStrictEqual([]);
      // BTS 2017 Table 1: carbon monoxide poisoning has no SpO2 target
      expect(runRule(rule, facts('SpO2 > 94%', { conditions: [condition('carbon-monoxide-poisoning')] }))).toStrictEqual([]);
    });

    it('without an order', () => {
      expect(runRule(rule, buildFacts({ orders: [] }))).toStrictEqual([]);
    });
  });
});
