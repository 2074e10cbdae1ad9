import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/sickle-cell-oxygen.js';
import { buildFacts, condition, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const crisis = [condition('sickle-cell-crisis')];

describe('sickle-cell-oxygen', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it.each([
    // BTS 2008, Table 2 (V): oxygen only if hypoxaemic, target 94-98 %
    [94, true],
    [97, true],
    [93, false],
  ])('at SpO2 %s %% reminds that oxygen is for hypoxaemia: %s', (value, fires) => {
    const findings = runRule(rule, buildFacts({ conditions: crisis, spo2Percent: [spo2(value)] }));
    expect(findings.length).toBe(fires ? 1 : 0);
    if (fires) {
      const card = expectCardRenders(onlyFinding(findings));
      expect(card.summary).toBe(`Sickle cell crisis with SpO2 ${value} % (10 min ago): oxygen is advised only if hypoxaemic`);
    }
  });

  it('does not fire without a sickle cell crisis', () => {
    expect(runRule(rule, buildFacts({ spo2Percent: [spo2(97)] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('does not fire without a current SpO2', () => {
      expect(runRule(rule, buildFacts({ conditions: crisis }))).toStrictEqual([]);
    });
  });
});
