import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/hypercapnia-without-chronic-retention.js';
import type { ConditionKind, Facts } from '../../../src/core/types.js';
import { BTS, TSANZ, bloodGas, buildFacts, condition, respRate, withPolicy } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

/**
 * A gas with HCO3 25 mmol/L: within the acute rise at every PCO2 used here (24 + 1 per 10 mmHg above
 * 40, plus 2; check-values 3g, quoted secondarily), so no sign of chronic retention.
 */
function tiring(ph: number, paco2Kpa: number, kinds: readonly ConditionKind[] = [], extra: Partial<Facts> = {}): Facts {
  return buildFacts({
    conditions: kinds.map((k) => condition(k)),
    bloodGases: [bloodGas({ ageMinutes: 20, ph, paco2Kpa, pao2Kpa: 8.9, hco3: 25 })],
    ...extra,
  });
}

const movePolicy = withPolicy(BTS, {
  hypercapnicRisk: { ...BTS.hypercapnicRisk, acuteHypercapniaWithoutRiskTarget: 'hypercapnic-risk-range' },
});

describe('hypercapnia-without-chronic-retention', () => {
  it('runs on order-sign as critical', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('critical');
  });

  it('calls a tiring asthmatic critical, keeps 94-98 % and names the cause and the breathing rate', () => {
    // pH 7.26 < 7.35 (RCEM); PaCO2 7.9 kPa >= 6 kPa (BTS 2017 clarification); a raised PaCO2 in acute
    // asthma marks near-fatal asthma (BTS/SIGN asthma guideline, from memory); 94-98 % kept (BTS 2017)
    const finding = onlyFinding(runRule(rule, tiring(7.26, 7.9, ['acute-asthma'], { respRatePerMin: [respRate(32, 5)] })));
    expect(finding.indicator).toBe('critical');
    expect(finding.orderReference).toBeUndefined();
    expect(finding.change).toBeUndefined();
    expect(finding.values).toMatchObject({
      ph: '7.26',
      paco2: '7.9 kPa',
      specimen: 'arterial',
      bicarbonate: 'HCO3 25 mmol/L',
      respiratoryRate: '32/min (5 min ago)',
      causes: "Acute severe asthma (text: 'acute asthma')",
      classification: 'acute hypercapnic acidosis with no sign of chronic CO2 retention',
    });
    expect(finding.values.rangeReasoning).toContain('The range stays 94–98 %');
    expect(finding.sourceKeys).toStrictEqual(['bts-2017', 'bts-sign-asthma', 'rcem-abg', 'local-policy']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe(
      'Raised PCO2 7.9 kPa, pH 7.26, no sign of chronic retention: may be tiring. Urgent senior and critical-care review',
    );
    expect(card.detail).toContain('Do not reduce oxygen because of the CO2');
    expect(card.detail).toContain('near-fatal asthma');
    expect(card.detail).not.toContain('\\*'); // no escaped markdown from a value
  });

  it.each<[string, number, number, readonly ConditionKind[]]>([
    // all acidaemic (RCEM < 7.35) and hypercapnic (BTS 2017 >= 6 kPa) with no sign of chronic retention
    ['opioid toxicity', 7.21, 8.8, ['sedative-or-opioid-toxicity']],
    ['neuromuscular weakness not on record as a disease', 7.3, 6.8, []],
    ['exhaustion', 7.31, 6.4, []],
  ])('fires as critical in %s', (_, ph, paco2, kinds) => {
    const finding = onlyFinding(runRule(rule, tiring(ph, paco2, kinds)));
    expect(finding.indicator).toBe('critical');
    expectCardRenders(finding);
  });

  it('names no cause when none is documented, and lists the ones to consider', () => {
    const finding = onlyFinding(runRule(rule, tiring(7.3, 6.8)));
    expect(finding.values.causes).toContain('none documented');
    expect(finding.values.causes).toContain('sedative or opioid toxicity');
  });

  it('says local policy moved the range when the policy key asks for the at-risk range', () => {
    const finding = onlyFinding(runRule(rule, tiring(7.26, 7.9, ['acute-asthma']), { policy: movePolicy }));
    expect(finding.values.rangeReasoning).toContain('Local policy moves the range to 88–92 %');
    expect(expectCardRenders(finding).detail).not.toMatch(/\\[`*]/); // no escaped markdown from a value
  });

  it.each<[string, readonly ConditionKind[], number]>([
    ['COPD', ['copd'], 25], // BTS 2017, Table 4: acute-on-chronic, owned by acute-hypercapnic-acidosis
    ['documented neuromuscular disease', ['neuromuscular-disease'], 25], // BTS 2017, Table 4
    ['a bicarbonate beyond the acute rise', [], 33], // check-values 3g: 33 > 26.8 + 2 at 9 kPa
  ])('does not fire with a sign of chronic retention: %s', (_, kinds, hco3) => {
    const facts = buildFacts({
      conditions: kinds.map((k) => condition(k)),
      bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.28, paco2Kpa: 9, hco3 })],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('does not fire without hypercapnia or without a gas', () => {
    expect(runRule(rule, tiring(7.3, 5.9, ['acute-asthma']))).toStrictEqual([]); // < 6 kPa (BTS 2017 clarification)
    expect(runRule(rule, buildFacts({ conditions: [condition('acute-asthma')] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it.each([
      // pH exactly 7.35 is not acidosis (RCEM 7.35-7.45): a warning, unless acute asthma is documented
      [7.35, [] as ConditionKind[], 'warning'],
      [7.34, [] as ConditionKind[], 'critical'],
      [7.35, ['acute-asthma'] as ConditionKind[], 'critical'], // BTS/SIGN asthma, from memory: raised PaCO2 is near-fatal
    ])('pH %s with PaCO2 6.1 kPa and %j is %s', (ph, kinds, indicator) => {
      const finding = onlyFinding(runRule(rule, tiring(ph, 6.1, kinds)));
      expect(finding.indicator).toBe(indicator);
      expectCardRenders(finding);
    });

    it('fires at PaCO2 exactly 6.0 kPa and not at 5.99', () => {
      // BTS 2017 clarification: hypercapnia is PaCO2 >= 6 kPa
      expect(runRule(rule, tiring(7.32, 6.0)).length).toBe(1);
      expect(runRule(rule, tiring(7.32, 5.99)).length).toBe(0);
    });

    it('asks for an arterial sample when the gas is venous', () => {
      const facts = buildFacts({ bloodGases: [bloodGas({ ageMinutes: 20, specimen: 'venous', ph: 7.27, paco2Kpa: 8.1, hco3: 25 })] });
      expect(onlyFinding(runRule(rule, facts)).values.specimen).toBe('venous (confirm with an arterial sample)');
    });

    it('does not fire without a pH: acute and chronic cannot be told apart', () => {
      const facts = buildFacts({ bloodGases: [bloodGas({ ageMinutes: 20, paco2Kpa: 8.1, hco3: 25 })] });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });

    it('keeps the TSANZ range under the TSANZ preset and does not quote the BTS numbers as its own', () => {
      // TSANZ 2015: 92-96 % for most acute medical patients
      const finding = onlyFinding(runRule(rule, tiring(7.26, 7.9, ['acute-asthma']), { policy: TSANZ }));
      expect(finding.values.rangeReasoning).toContain('The range stays 92–96 %');
      expect(finding.values.rangeReasoning).not.toContain('94–98');
    });

    it('says no SpO2 range applies in carbon monoxide poisoning', () => {
      // BTS 2017, Table 1: no SpO2 target in CO poisoning
      const finding = onlyFinding(runRule(rule, tiring(7.28, 7.2, ['carbon-monoxide-poisoning'])));
      expect(finding.values.rangeReasoning).toContain('No SpO2 range applies');
    });
  });
});
