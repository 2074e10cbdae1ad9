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
