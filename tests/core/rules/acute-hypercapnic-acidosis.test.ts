import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/acute-hypercapnic-acidosis.js';
import { BTS, bloodGas, buildFacts } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const withGas = (ph: number, paco2Kpa: number, specimen: 'arterial' | 'venous' = 'arterial') =>
  buildFacts({ bloodGases: [bloodGas({ ageMinutes: 35, specimen, ph, paco2Kpa, pao2Kpa: 8.4, hco3: 30 })] });

describe('acute-hypercapnic-acidosis', () => {
  it('runs on order-sign as critical', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('critical');
  });

  it('fires for pH 7.28 with PaCO2 8.2 kPa and says the NIV thresholds are met', () => {
    // RCEM: pH < 7.35 acidosis; BTS 2017: PaCO2 >= 6 kPa; BTS/ICS 2016: NIV at pH < 7.35 and PaCO2 > 6.5 kPa
    const finding = onlyFinding(runRule(rule, withGas(7.28, 8.2)));
    expect(finding.indicator).toBe('critical');
    expect(finding.values).toStrictEqual({
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
      advisedRange: '88–92 %',
    });
    expect(finding.change).toBeUndefined();
    expect(finding.sourceKeys).toStrictEqual(['bts-2017', 'bts-ics-2016', 'rcem-abg']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe(
      'Acute hypercapnic acidosis: pH 7.28, PCO2 8.2 kPa (35 min ago). Urgent review; more oxygen is not the treatment',
    );
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
  ])('pH %s with PaCO2 %s kPa fires: %s (NIV %s, invasive %s)', (ph, paco2, fires, niv, invasive) => {
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

  describe('edge cases', () => {
    it('asks for an arterial sample when the gas is venous', () => {
      const finding = onlyFinding(runRule(rule, withGas(7.29, 7.9, 'venous')));
      expect(finding.values.specimen).toBe('venous (confirm with an arterial sample)');
    });

    it('does not fire without pH or PaCO2, or with a gas outside the current window', () => {
      expect(runRule(rule, buildFacts({ bloodGases: [bloodGas({ ageMinutes: 10, paco2Kpa: 8 })] }))).toStrictEqual([]);
      const old = bloodGas({ ageMinutes: BTS.freshness.bloodGasMinutes + 1, ph: 7.2, paco2Kpa: 9 });
      expect(runRule(rule, buildFacts({ bloodGases: [old] }))).toStrictEqual([]);
    });

    it('shows a gas reported in mmHg in mmHg', () => {
      const facts = buildFacts({ bloodGases: [bloodGas({ ageMinutes: 10, ph: 7.3, paco2MmHg: 60 })] });
      expect(onlyFinding(runRule(rule, facts)).values.paco2).toBe('60 mmHg');
    });
  });
});
