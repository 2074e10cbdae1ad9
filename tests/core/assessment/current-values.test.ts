import { describe, expect, it } from 'vitest';
import { isWithin, pickCurrentValues } from '../../../src/core/assessment/current-values.js';
import { BTS, NOW, bloodGas, buildFacts, haemoglobin, minutesAgo, spo2 } from '../facts-builder.js';

describe('pickCurrentValues', () => {
  it('takes the latest SpO2 within the vital-signs window whatever the list order', () => {
    const facts = buildFacts({ spo2Percent: [spo2(90, 60), spo2(93, 5), spo2(91, 30)] });
    expect(pickCurrentValues(facts, BTS, NOW).spo2?.value).toBe(93);
  });

  it('keeps a venous gas as the current gas but not as the arterial one', () => {
    const venous = bloodGas({ ageMinutes: 20, specimen: 'venous', ph: 7.3, paco2Kpa: 7.4 });
    const arterial = bloodGas({ ageMinutes: 120, ph: 7.33, paco2Kpa: 6.9, pao2Kpa: 8 });
    const current = pickCurrentValues(buildFacts({ bloodGases: [venous, arterial] }), BTS, NOW);
    expect(current.gas).toBe(venous);
    expect(current.arterialGas).toBe(arterial);
  });

  describe('a later partial gas does not hide an earlier fuller one', () => {
    // pH 7.28 with PaCO2 8.1 kPa: acidosis (pH < 7.35, RCEM range) with hypercapnia (>= 6 kPa, BTS 2017)
    const full = bloodGas({ ageMinutes: 40, ph: 7.28, paco2Kpa: 8.1, pao2Kpa: 7.9, hco3: 28 });

    it.each([
      ['a lone PaO2', bloodGas({ ageMinutes: 20, pao2Kpa: 9.2 })],
      ['a lone HCO3', bloodGas({ ageMinutes: 20, hco3: 29 })],
      ['a pH without its PCO2', bloodGas({ ageMinutes: 20, ph: 7.31 })],
      ['a PCO2 without its pH', bloodGas({ ageMinutes: 20, paco2Kpa: 7.9 })],
    ])('keeps the acid-base gas when %s is filed later', (_label, partial) => {
      const current = pickCurrentValues(buildFacts({ bloodGases: [partial, full] }), BTS, NOW);
      expect(current.gas).toBe(full);
    });

    it('takes a later gas with both pH and PCO2, whatever its other values', () => {
      const later = bloodGas({ ageMinutes: 20, ph: 7.36, paco2Kpa: 6.2 });
      expect(pickCurrentValues(buildFacts({ bloodGases: [full, later] }), BTS, NOW).gas).toBe(later);
    });

    it('falls back to a PCO2-only gas, then a pH-only one, then any', () => {
      const pco2Only = bloodGas({ ageMinutes: 30, paco2Kpa: 7.9 });
      const phOnly = bloodGas({ ageMinutes: 10, ph: 7.3 });
      const hco3Only = bloodGas({ ageMinutes: 5, hco3: 30 });
      expect(pickCurrentValues(buildFacts({ bloodGases: [hco3Only, phOnly, pco2Only] }), BTS, NOW).gas).toBe(pco2Only);
      expect(pickCurrentValues(buildFacts({ bloodGases: [hco3Only, phOnly] }), BTS, NOW).gas).toBe(phOnly);
      expect(pickCurrentValues(buildFacts({ bloodGases: [hco3Only] }), BTS, NOW).gas).toBe(hco3Only);
    });

    it('takes the arterial gas with a PaO2 over a later arterial gas without one', () => {
      const later = bloodGas({ ageMinutes: 10, ph: 7.3, paco2Kpa: 8 });
      expect(pickCurrentValues(buildFacts({ bloodGases: [later, full] }), BTS, NOW).arterialGas).toBe(full);
    });

    it('never reaches outside the gas window for a fuller gas', () => {
      // Policy freshness.bloodGasMinutes: 720 in the bundled policy (local choice)
      const old = bloodGas({ ageMinutes: BTS.freshness.bloodGasMinutes + 1, ph: 7.28, paco2Kpa: 8.1 });
      const partial = bloodGas({ ageMinutes: 20, pao2Kpa: 9.2 });
      expect(pickCurrentValues(buildFacts({ bloodGases: [partial, old] }), BTS, NOW).gas).toBe(partial);
    });
  });

  describe('edge cases', () => {
    it('counts a reading exactly at the end of the window as current, and one a minute older as not', () => {
      // Policy freshness.vitalSignsMinutes: 240 in the bundled policy (local choice)
      expect(BTS.freshness.vitalSignsMinutes).toBe(240);
      expect(isWithin(minutesAgo(240), NOW, 240)).toBe(true);
      expect(isWithin(minutesAgo(241), NOW, 240)).toBe(false);
      const facts = buildFacts({ spo2Percent: [spo2(92, 241)] });
      expect(pickCurrentValues(facts, BTS, NOW).spo2).toBeUndefined();
    });

    it('uses the haemoglobin window in hours', () => {
      const facts = buildFacts({ haemoglobinGPerDL: [haemoglobin(11, 71 * 60)] });
      expect(pickCurrentValues(facts, BTS, NOW).haemoglobin?.value).toBe(11);
      const old = buildFacts({ haemoglobinGPerDL: [haemoglobin(11, 73 * 60)] });
      expect(pickCurrentValues(old, BTS, NOW).haemoglobin).toBeUndefined();
    });
  });
});
