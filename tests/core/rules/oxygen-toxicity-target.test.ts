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

  it.each<[string, number, number]>([
    // BTS 2017, Table 3 (V2): 85-88 %; every other range is a warning with 85-88 % suggested
    ['94-98 %', 94, 98], // BTS 2017, Tables 1-3: the standard range
    ['88-92 %', 88, 92], // BTS 2017, Table 4: the at-risk range
    ['85-90 %', 85, 90], // the right lower bound with a higher upper bound (invented order)
    ['80-85 %', 80, 85], // below the range (invented order)
  ])('with %s ordered warns and suggests 85-88 %%', (_, low, high) => {
    const facts = buildFacts({
      conditions: [condition('bleomycin-lung-injury')],
      orders: [oxygenOrder({ target: { lowPercent: low, highPercent: high, readFrom: 'structured' } })],
      spo2Percent: [spo2(90)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 85, highPercent: 88 } }); // BTS 2017, Table 3 (V2)
    expectCardRenders(finding);
  });

  it.each([80, 84, 85, 86, 88, 90, 95])(
    'keeps quiet whatever the SpO2 (%s %%) once 85-88 %% is ordered: nothing left to advise',
    (value) => {
      // BTS 2017, Table 3 (V2): 85-88 % is the advice; repeating it on a matching order is alert
      // fatigue (common practice). SpO2 above 88 % is spo2-above-target's or oxygen-without-hypoxaemia's.
      for (const kind of ['paraquat-poisoning', 'bleomycin-lung-injury'] as const) {
        const facts = buildFacts({ conditions: [condition(kind)], orders: toxicRange, spo2Percent: [spo2(value)] });
        expect(runRule(rule, facts), `${kind}, SpO2 ${value} %`).toStrictEqual([]);
      }
    },
  );

  it('does not fire without paraquat or bleomycin', () => {
    expect(runRule(rule, buildFacts())).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('keeps quiet when the range matches and there is no SpO2', () => {
      expect(runRule(rule, buildFacts({ conditions: paraquat, orders: toxicRange }))).toStrictEqual([]);
    });

    it('yields to carbon monoxide poisoning, where no SpO2 target applies', () => {
      expect(runRule(rule, buildFacts({ conditions: [...paraquat, condition('carbon-monoxide-poisoning')] }))).toStrictEqual([]);
    });
  });
});
