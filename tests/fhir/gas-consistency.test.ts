import { describe, expect, it } from 'vitest';
import type { BloodGas } from '../../src/core/types.js';
import { checkGasConsistency } from '../../src/fhir/gas-consistency.js';

/** An invented Larkspur Bay arterial sample; pressures in mmHg as the reader stores them. */
function gas(parts: Partial<BloodGas> & Pick<BloodGas, 'reported'>): BloodGas {
  return {
    at: '2026-12-01T11:00:00Z',
    specimen: 'arterial',
    ph: undefined,
    pao2MmHg: undefined,
    paco2MmHg: undefined,
    hco3MmolPerL: undefined,
    baseExcessMmolPerL: undefined,
    ...parts,
  };
}

describe('checkGasConsistency', () => {
  // Henderson–Hasselbalch with pK 6.1 and 0.0307 mmol/L per mmHg (from memory); tolerance 6 mmol/L
  // (common practice: the gas interpretation's consistency check).
  it.each([
    // pH, PCO2 mmHg, HCO3 reported: calculated HCO3
    [7.4, 40, 24, 'normal gas, calculated 24.5'], // check value of henderson-hasselbalch.ts
    [7.28, 70, 32, 'acute-on-chronic hypercapnia, calculated 32.5'],
    [7.3, 54.0, 30, 'compensated hypercapnia 7.2 kPa, calculated 26.3'],
  ])('keeps a consistent sample: pH %s, PCO2 %s mmHg, HCO3 %s (%s)', (ph, pco2, hco3) => {
    const sample = gas({ ph, paco2MmHg: pco2, pao2MmHg: 60, hco3MmolPerL: hco3, reported: {} });
    expect(checkGasConsistency(sample, 'Observation/abg-1')).toStrictEqual({ gas: sample, note: undefined });
  });

  it('sets aside the pressures of a kPa PCO2 labelled mmHg, and says the other unit would agree', () => {
    // pH 7.33, PCO2 12 read as mmHg: calculated HCO3 0.0307 × 12 × 10^1.23 = 6.3 mmol/L against
    // 45 reported; read as 12 kPa (90.0 mmHg) it is 46.9 mmol/L, within 6 of 45.
    const sample = gas({
      ph: 7.33,
      paco2MmHg: 12,
      pao2MmHg: 8.1,
      hco3MmolPerL: 45,
      reported: {
        ph: { value: 7.33, unit: '[pH]' },
        paco2: { value: 12, unit: 'mm[Hg]' },
        pao2: { value: 8.1, unit: 'mm[Hg]' },
        hco3: { value: 45, unit: 'mmol/L' },
      },
    });
    const checked = checkGasConsistency(sample, 'Observation/abg-2');
    expect(checked.gas).toStrictEqual({
      ...sample,
      paco2MmHg: undefined,
      pao2MmHg: undefined,
      reported: { ph: { value: 7.33, unit: '[pH]' }, hco3: { value: 45, unit: 'mmol/L' } },
    });
    expect(checked.note).toStrictEqual({
      what: 'Blood gas pressures',
      reason: 'implausible',
      detail:
        'PCO2 12 mmHg does not agree with pH 7.33 and HCO3 45 mmol/L (HCO3 calculated from them: 6.3 mmol/L); ' +
        'it would agree in kPa, so the unit may be mislabelled. The PCO2 and PO2 of this sample were not used.',
      reference: 'Observation/abg-2',
    });
  });

  it('sets aside the pressures of a PCO2 below 10 mmHg, which reads like a kPa value', () => {
    // 6.9 "mmHg": below the 10 mmHg floor (common practice); climbers near the Everest summit
    // reach about 7.5 mmHg (West 1983, check-values 3b), hospital patients hardly ever
    const sample = gas({ paco2MmHg: 6.9, pao2MmHg: 10.2, reported: { paco2: { value: 6.9, unit: 'mm[Hg]' } } });
    const checked = checkGasConsistency(sample, 'Observation/pco2-3');
    expect([checked.gas.paco2MmHg, checked.gas.pao2MmHg, checked.gas.reported]).toStrictEqual([undefined, undefined, {}]);
    expect(checked.note?.detail).toBe(
      'PCO2 6.9 mmHg is below 10 mmHg, as a kPa value labelled mmHg would. The PCO2 and PO2 of this sample were not used.',
    );
  });

  it('sets aside pressures that agree in neither unit without naming one', () => {
    // pH 7.40, PCO2 40 mmHg, HCO3 45: calculated 24.5 (21 away); as 40 kPa it is 184 (out of agreement too)
    const sample = gas({ ph: 7.4, paco2MmHg: 40, hco3MmolPerL: 45, reported: { paco2: { value: 40, unit: 'mm[Hg]' } } });
    const checked = checkGasConsistency(sample, undefined);
    expect(checked.gas.paco2MmHg).toBeUndefined();
    expect(checked.note?.detail).toBe(
      'PCO2 40 mmHg does not agree with pH 7.40 and HCO3 45 mmol/L (HCO3 calculated from them: 24.5 mmol/L). ' +
        'The PCO2 and PO2 of this sample were not used.',
    );
  });

  describe('edge cases', () => {
    it('cannot check agreement without all of pH, PCO2 and HCO3', () => {
      const sample = gas({ ph: 7.33, paco2MmHg: 12, reported: {} });
      expect(checkGasConsistency(sample, undefined)).toStrictEqual({ gas: sample, note: undefined });
    });

    it('keeps a PCO2 of exactly 10 mmHg', () => {
      const sample = gas({ paco2MmHg: 10, reported: { paco2: { value: 10, unit: 'mm[Hg]' } } });
      expect(checkGasConsistency(sample, undefined).note).toBeUndefined();
    });

    it('keeps a sample exactly 6 mmol/L from the calculated HCO3', () => {
      // calculated 24.5 at pH 7.40 / 40 mmHg (rounded); 30.5 reported is 6.0 away within rounding
      const calculated = 0.0307 * 40 * 10 ** (7.4 - 6.1);
      const sample = gas({ ph: 7.4, paco2MmHg: 40, hco3MmolPerL: calculated + 6, reported: {} });
      expect(checkGasConsistency(sample, undefined).note).toBeUndefined();
    });
  });
});
