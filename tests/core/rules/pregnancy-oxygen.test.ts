import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/pregnancy-oxygen.js';
import { buildFacts, condition, oxygenOrder, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const pregnant = [condition('pregnancy')];

describe('pregnancy-oxygen', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('notes the usual target and the labour threshold of 94 %', () => {
    // BTS 2017 (V2): same targets in pregnancy; no oxygen in uncomplicated labour unless SpO2 < 94 %
    const finding = onlyFinding(runRule(rule, buildFacts({ conditions: pregnant, spo2Percent: [spo2(96)] })));
    expect(finding.values.labourThreshold).toBe('94 %');
    expect(finding.values.targetRange).toBe('94–98 %');
    expect(expectCardRenders(finding).summary).toBe('Pregnancy with SpO2 96 % (10 min ago): same target as other patients, oxygen only if needed');
  });

  it.each([
    // BTS 2017 (V2): oxygen in uncomplicated labour only if SpO2 < 94 %; target 94-98 %
    [93, false],
    [94, true],
    [99, true],
  ])('at SpO2 %s %% fires: %s', (value, fires) => {
    const findings = runRule(rule, buildFacts({ conditions: pregnant, spo2Percent: [spo2(value)] }));
    expect(findings.length).toBe(fires ? 1 : 0);
    findings.forEach((f) => expectCardRenders(f));
  });

  it('does not fire when the patient is below the target', () => {
    expect(runRule(rule, buildFacts({ conditions: pregnant, spo2Percent: [spo2(92)] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('uses the at-risk range when a pregnant woman is at risk of hypercapnia', () => {
      // BTS 2017 (V2): 88-92 % if at risk of hypercapnic respiratory failure
      const facts = buildFacts({
        conditions: [...pregnant, condition('cystic-fibrosis')],
        orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
        spo2Percent: [spo2(90)],
      });
      expect(onlyFinding(runRule(rule, facts)).values.targetRange).toBe('88–92 %');
    });
  });
});
