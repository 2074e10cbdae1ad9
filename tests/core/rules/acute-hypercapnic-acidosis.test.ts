import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/acute-hypercapnic-acidosis.js';
import type { ConditionKind } from '../../../src/core/types.js';
import { BTS, bloodGas, buildFacts, condition, respRate } from '../facts-builder.js';
import { expectCardRenders, expectRangeNamedAsPolicys, POLICY_AT_RISK_RANGES, policyWithAtRiskRange } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';
import { reviewFacts, steady } from '../titration/review-facts.js';

const withGas = (
  ph: number,
  paco2Kpa: number,
  options: { specimen?: 'arterial' | 'venous'; hco3?: number; conditions?: readonly ConditionKind[] } = {},
) =>
  buildFacts({
    conditions: (options.conditions ?? ['copd']).map((k) => condition(k)),
    bloodGases: [
      bloodGas({ ageMinutes: 35, specimen: options.specimen ?? 'arterial', ph, paco2Kpa, pao2Kpa: 8.4, hco3: options.hco3 ?? 30 }),
    ],
  });

describe('acute-hypercapnic-acidosis', () => {
  it('runs on order-sign and patient-view as critical', () => {
    expect(rule.hooks).toStrictEqual(['order-sign', 'patient-view']);
    expect(rule.defaultIndicator).toBe('critical');
  });

  it('fires for COPD with pH 7.28 and PaCO2 8.2 kPa and says the NIV thresholds are met', () => {
    // RCEM: pH < 7.35 acidosis; BTS 2017: PaCO2 >= 6 kPa; BTS/ICS 2016: NIV at pH < 7.35 and PaCO2 > 6.5 kPa
    const finding = onlyFinding(runRule(rule, withGas(7.28, 8.2)));
    expect(finding.indicator).toBe('critical');
    expect(finding.values).toMatchObject({
      ph: '7.28',
      paco2: '8.2 kPa',
      gasAge: '35 min ago',
      specimen: 'arterial',
      acidosisPh: '7.35',
      hypercapniaThreshold: '6 kPa',
      nivThresholds: 'pH < 7.35 and PaCO2 > 6.5 kPa',
      nivThresholdsMet: 'met',
      invasiveThreshold: 'pH < 7.25',
      invasiveThresholdMet: 'not met',
      advisedRange: '88–92 %', // BTS 2017, Table 4
      bicarbonate: 'HCO3 30 mmol/L',
      // HCO3 30 is beyond the acute rise at 8.2 kPa (26.2 + 2; check-values 3g) and above 28 (BTS 2017 as quoted)
      chronicEvidence: 'Chronic obstructive lung disease (SNOMED CT 13645005); HCO3 30 mmol/L',
      respiratoryRate: 'not recorded in the last 4 h',
    });
    expect(finding.change).toBeUndefined();
    expect(finding.sourceKeys).toStrictEqual(['bts-2017', 'bts-ics-2016', 'rcem-abg']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe(
      'Acute-on-chronic hypercapnic acidosis: pH 7.28, PCO2 8.2 kPa (35 min ago). Urgent review; consider NIV',
    );
  });

  it('states a fast respiratory rate as it is and never speaks of under-breathing', () => {
    // A tiring COPD patient breathing at 32/min: the PCO2 rises with fast, shallow breathing
    const facts = { ...withGas(7.27, 8.6), respRatePerMin: [respRate(32, 5)] };
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.respiratoryRate).toBe('32/min (5 min ago)');
    const card = expectCardRenders(finding);
    expect(card.detail).toContain('Respiratory rate: 32/min (5 min ago)');
    expect(card.detail.toLowerCase()).not.toMatch(/under-?breathing/);
  });

  it.each([
    // [pH, PaCO2 kPa, fires, NIV met, invasive met]; sources: RCEM (7.35), BTS 2017 (>= 6 kPa), BTS/ICS 2016 (NIV 7.35 / 6.5 kPa; IMV 7.25)
    [7.35, 8.0, false, '', ''], // pH exactly 7.35 is not acidosis
    [7.34, 6.0, true, 'not met', 'not met'], // PaCO2 exactly 6.0 kPa is hypercapnia
    [7.34, 5.99, false, '', ''],
    [7.34, 6.5, true, 'not met', 'not met'], // NIV needs PaCO2 above 6.5 kPa
    [7.34, 6.51, true, 'met', 'not met'],
    [7.25, 9.0, true, 'met', 'not met'], // pH exactly 7.25 is not below 7.25
    [7.24, 9.0, true, 'met', 'met'],
  ])('COPD with pH %s and PaCO2 %s kPa fires: %s (NIV %s, invasive %s)', (ph, paco2, fires, niv, invasive) => {
    const findings = runRule(rule, withGas(ph, paco2));
    expect(findings.length).toBe(fires ? 1 : 0);
    if (fires) {
      expect(findings[0]?.values.nivThresholdsMet).toBe(niv);
      expect(findings[0]?.values.invasiveThresholdMet).toBe(invasive);
      expectCardRenders(onlyFinding(findings));
    }
  });

  it('does not fire for compensated hypercapnia', () => {
    // BTS 2017 pathway: pH >= 7.35 with PaCO2 > 6 kPa is compensated (V2)
    expect(runRule(rule, withGas(7.38, 7.2))).toStrictEqual([]);
  });

  it.each<[string, readonly ConditionKind[]]>([
    ['acute severe asthma', ['acute-asthma']],
    ['opioid toxicity', ['sedative-or-opioid-toxicity']],
    ['nothing documented', []],
  ])('leaves acute hypercapnia without chronic retention to its own rule: %s', (_, conditions) => {
    // HCO3 25 at PaCO2 8.0 kPa is within the acute rise (check-values 3g, quoted secondarily)
    expect(runRule(rule, withGas(7.26, 8.0, { hco3: 25, conditions }))).toStrictEqual([]);
  });

  it('fires for a raised bicarbonate alone: an undiagnosed retainer', () => {
    // HCO3 33 at PaCO2 9 kPa is beyond the acute rise of 26.8 + 2 (check-values 3g)
    const finding = onlyFinding(runRule(rule, withGas(7.3, 9.0, { hco3: 33, conditions: [] })));
    expect(finding.values.chronicEvidence).toContain('HCO3 33 mmol/L');
    expectCardRenders(finding);
  });

  describe('edge cases', () => {
    it('asks for an arterial sample when the gas is venous', () => {
      const finding = onlyFinding(runRule(rule, withGas(7.29, 7.9, { specimen: 'venous' })));
      expect(finding.values.specimen).toBe('venous (confirm with an arterial sample)');
    });

    it('does not fire without pH or PaCO2, or with a gas outside the current window', () => {
      const copd = [condition('copd')];
      expect(runRule(rule, buildFacts({ conditions: copd, bloodGases: [bloodGas({ ageMinutes: 10, paco2Kpa: 8 })] }))).toStrictEqual([]);
      const old = bloodGas({ ageMinutes: BTS.freshness.bloodGasMinutes + 1, ph: 7.2, paco2Kpa: 9 });
      expect(runRule(rule, buildFacts({ conditions: copd, bloodGases: [old] }))).toStrictEqual([]);
    });

    it('shows a gas reported in mmHg in mmHg', () => {
      const facts = buildFacts({ conditions: [condition('copd')], bloodGases: [bloodGas({ ageMinutes: 10, ph: 7.3, paco2MmHg: 60 })] });
      expect(onlyFinding(runRule(rule, facts)).values.paco2).toBe('60 mmHg');
    });
  });

  describe('on patient-view', () => {
    // An invented Larkspur Bay COPD patient on 28 % Venturi with SpO2 90 % (in 88-92 %, BTS 2017
    // Table 4) hourly and a gas 40 min ago: pH 7.29 < 7.35 (RCEM) with PaCO2 8.1 kPa >= 6 kPa (BTS 2017
    // clarification): acute-on-chronic hypercapnic acidosis; BTS/ICS 2016: consider NIV.
    const ages = [300, 240, 180, 120, 60, 10];
    const onVenturi = (purpose: 'titrate' | 'comfort') =>
      reviewFacts({
        order: { device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 4, purpose, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } },
        conditions: ['copd'],
        spo2: steady(90, ages),
        fio2: steady(0.28, ages),
        gases: [bloodGas({ ageMinutes: 40, ph: 7.29, paco2Kpa: 8.1, pao2Kpa: 8.0, hco3: 30 })],
      });

    it('is critical for a patient on an oxygen order with SpO2 in range', () => {
      const finding = onlyFinding(runRule(rule, onVenturi('titrate'), { hook: 'patient-view' }));
      expect(finding.indicator).toBe('critical');
      expect(expectCardRenders(finding).summary).toContain('consider NIV');
    });

    it('is silent for comfort oxygen in end-of-life care', () => {
      // BTS 2017: in terminal palliative care oxygen is for comfort, not a target (SRC.btsPalliative).
      expect(runRule(rule, onVenturi('comfort'), { hook: 'patient-view' })).toStrictEqual([]);
    });

    it('is silent on a record with no oxygen order (the review does not apply)', () => {
      // Common practice: the titration review speaks only about a patient on an oxygen order.
      expect(runRule(rule, { ...withGas(7.29, 8.1), orders: [], activeOrders: [] }, { hook: 'patient-view' })).toStrictEqual([]);
    });
  });
});

describe('acute-hypercapnic-acidosis under a range the policy chose', () => {
  // A policy or unit may set its own at-risk range (docs/policy.md); the card must not say the
  // guideline gives it (ranges and their sources in card-check.ts).
  it.each(POLICY_AT_RISK_RANGES)('names the at-risk range %i-%i as this policy\'s, never as BTS 2017\'s', (lowPercent, highPercent) => {
    const finding = onlyFinding(runRule(rule, withGas(7.28, 8.2), { policy: policyWithAtRiskRange(lowPercent, highPercent) }));
    expectRangeNamedAsPolicys(finding, lowPercent, highPercent);
  });
});

