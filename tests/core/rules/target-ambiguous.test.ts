import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/target-ambiguous.js';
import { rule as targetAboveHypercapnicRange } from '../../../src/core/rules/target-above-hypercapnic-range.js';
import { rule as targetRangeMissing } from '../../../src/core/rules/target-range-missing.js';
import { bloodGas, buildFacts, condition } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { orderFromWords } from './order-from-words.js';
import { onlyFinding, runRule } from './run-rule.js';

const facts = (text: string, extra: Parameters<typeof buildFacts>[0] = {}) =>
  buildFacts({ orders: [orderFromWords(text)], ...extra });
const copd = { conditions: [condition('copd')] }; // BTS 2017, Table 4: COPD puts a patient at risk

// Invented wordings. BTS 2017 asks for one target range; each of these gives two, or one on a
// condition judged at the bedside. The ranges are BTS 2017's: 88-92 % (Table 4), 94-98 % (Tables 1-3).
const AMBIGUOUS = [
  '88–92 % if drowsy, otherwise 94–98 %',
  '94–98 % until the gas is back',
  'SpO2 94-98% pending ABG',
  'initially aim 94-98%, review after gas',
  'target 88-92% or 94-98%',
  '94-98%; 88-92% if CO2 retainer',
  'if drowsy, target 88-92%',
  'target 88-92% unless PaCO2 normal',
  'target 94-98%, keep sats below 92',
];

describe('target-ambiguous', () => {
  it('runs on both hooks as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it.each(AMBIGUOUS)('says "%s" is unclear, asks for one range and offers no change', (text) => {
    const finding = onlyFinding(runRule(rule, facts(text)));
    expect(finding.change).toBeUndefined();
    expect(finding.values.writtenText).toContain(text.split(/[,;]/)[0]?.trim().slice(0, 10));
    const card = expectCardRenders(finding);
    expect(card.summary).toMatch(/please write one range/);
    // one card per problem: the missing-target card stays quiet
    expect(runRule(targetRangeMissing, facts(text))).toStrictEqual([]);
  });

  it('names the range the other checks used: the one that allows the most oxygen', () => {
    const finding = onlyFinding(runRule(rule, facts('88–92 % if drowsy, otherwise 94–98 %')));
    // BTS 2017: 94-98 % (Tables 1-3) is the higher of the two
    expect(finding.values.checkedRange).toBe('94–98 %, the reading that allows the most oxygen');
    expect(finding.values.rangesWritten).toBe('88–92 % and 94–98 %');
  });

  it('still lets the hypercapnic-risk check fire for an at-risk patient', () => {
    for (const text of ['94–98 % until the gas is back', '88–92 % if drowsy, otherwise 94–98 %', 'SpO2 94-98% pending ABG']) {
      const at = facts(text, copd);
      expect(onlyFinding(runRule(rule, at)).ruleId).toBe('target-ambiguous');
      // BTS 2017, Table 4: 88-92 % for COPD; 94-98 % is above it
      const above = onlyFinding(runRule(targetAboveHypercapnicRange, at));
      expect(above.values.orderedRange).toBe('94–98 %');
      expect(above.values.advisedRange).toBe('88–92 %');
    }
  });

  it('lets the hypercapnic-risk check be critical when the gas shows hypercapnia', () => {
    // PaCO2 >= 6 kPa is hypercapnia (BTS 2017 clarification); 7.4 kPa is above it
    const gas = bloodGas({ ageMinutes: 30, ph: 7.31, paco2Kpa: 7.4, pao2Kpa: 8.0, hco3: 31 });
    const at = facts('94–98 % until the gas is back', { ...copd, bloodGases: [gas] });
    expect(onlyFinding(runRule(targetAboveHypercapnicRange, at)).indicator).toBe('critical');
  });

  describe('does not fire', () => {
    it.each([
      'target SpO2 94-98%',
      'between 94 and 98 percent',
      'Target 94-98% if needed',
      'target 94-98%. If SpO2 < 90% call doctor',
      'keep sats above 92',
      '2 L/min via nasal cannula',
    ])('for "%s"', (text) => {
      expect(runRule(rule, facts(text))).toStrictEqual([]);
    });

    it('for a comfort order, or where no SpO2 target applies', () => {
      expect(runRule(rule, facts('palliative, for comfort: 88-92% if distressed'))).toStrictEqual([]);
      // BTS 2017 Table 1: carbon monoxide poisoning has no SpO2 target
      const co = facts('94–98 % until the gas is back', { conditions: [condition('carbon-monoxide-poisoning')] });
      expect(runRule(rule, co)).toStrictEqual([]);
    });
  });
});
