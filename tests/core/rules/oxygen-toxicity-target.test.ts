import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/oxygen-toxicity-target.js';
import { buildFacts, condition, oxygenOrder, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const paraquat = [condition('paraquat-poisoning')];
const toxicRange = [oxygenOrder({ target: { lowPercent: 85, highPercent: 88, readFrom: 'structured' } })];

describe('oxygen-toxicity-target', () => {
  it('runs on both hooks as a warning by default', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('suggests 85-88 % for paraquat poisoning with a 94-98 % order', () => {
    // BTS 2017, Table 3 (V2): paraquat and bleomycin, target 85-88 %, avoid oxygen unless hypoxaemic
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: paraquat })));
    expect(finding.indicator).toBe('warning');
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 85, highPercent: 88 } });
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Paraquat poisoning: oxygen may worsen the lung injury. Target 85–88 %, oxygen only if hypoxaemic');
  });

  it('suggests 85-88 % for bleomycin lung injury with no target on the order', () => {
    // BTS 2017, Table 3 (V2)
    const facts = buildFacts({ conditions: [condition('bleomycin-lung-injury')], orders: [oxygenOrder({ target: undefined })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.orderedRange).toBe('none');
    expectCardRenders(finding);
  });

  it('reminds that oxygen may not be needed when the range matches and SpO2 is at or above 85 %', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: paraquat, orders: toxicRange, spo2Percent: [spo2(85)] })));
    expect(finding.indicator).toBe('info');
    expect(finding.change).toBeUndefined();
    expectCardRenders(finding);
  });

  it.each<[string, number, number, string]>([
    // BTS 2017, Table 3 (V2): 85-88 %
    ['94-98 %', 94, 98, 'warning'],
    ['88-92 %', 88, 92, 'warning'],
    ['85-88 %', 85, 88, 'info'],
  ])('with %s ordered and SpO2 90 %% is a %s', (_, low, high, indicator) => {
    const facts = buildFacts({
      conditions: [condition('bleomycin-lung-injury')],
      orders: [oxygenOrder({ target: { lowPercent: low, highPercent: high, readFrom: 'structured' } })],
      spo2Percent: [spo2(90)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe(indicator);
    expectCardRenders(finding);
  });

  it('does not fire without paraquat or bleomycin', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('keeps quiet when the range matches and the patient is hypoxaemic', () => {
      expect(runRule(rule, buildFacts({ conditions: paraquat, orders: toxicRange, spo2Percent: [spo2(84)] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ conditions: paraquat, orders: toxicRange }))).toStrictEqual([]);
    });

    it('yields to carbon monoxide poisoning, where no SpO2 target applies', () => {
      expect(runRule(rule, buildFacts({ conditions: [...paraquat, condition('carbon-monoxide-poisoning')] }))).toStrictEqual([]);
    });
  });
});
