import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/no-recent-spo2.js';
import { BTS, buildFacts, spo2 } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

describe('no-recent-spo2', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('says no SpO2 was found in the last 4 h', () => {
    // Policy freshness.vitalSignsMinutes 240 (local choice)
    const finding = onlyFinding(runRule(rule, buildFacts()));
    expect(finding.values).toStrictEqual({ freshnessWindow: '4 h', lastSpo2: 'none within the window' });
    expect(expectCardRenders(finding).summary).toBe('No SpO2 reading in the last 4 h: the response to oxygen could not be checked');
  });

  it('names a stale reading when the reader passed one', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ spo2Percent: [spo2(91, 310)] })));
    expect(finding.values.lastSpo2).toBe('91 % (5 h 10 min ago)');
  });

  it.each([
    // Policy freshness.vitalSignsMinutes 240 (local choice)
    [30, false],
    [240, false],
    [241, true],
    [600, true],
  ])('with the last SpO2 %s min old fires: %s', (age, fires) => {
    const findings = runRule(rule, buildFacts({ spo2Percent: [spo2(93, age)] }));
    expect(findings.length).toBe(fires ? 1 : 0);
    findings.forEach((f) => expectCardRenders(f));
  });

  it('does not fire with a current SpO2', () => {
    expect(runRule(rule, buildFacts({ spo2Percent: [spo2(95, 30)] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('counts a reading exactly at the window edge as current', () => {
      expect(runRule(rule, buildFacts({ spo2Percent: [spo2(95, BTS.freshness.vitalSignsMinutes)] }))).toStrictEqual([]);
    });
  });
});
