import { describe, expect, it } from 'vitest';
import {
  computeGasInterpretation,
  computeOxygenContent,
  computeRox,
  computeSfRatio,
} from '../../../src/core/assessment/bedside-physiology.js';
import type { Fio2InForce } from '../../../src/core/assessment/types.js';
import type { Outcome } from '../../../src/core/types.js';
import { BTS, bloodGas, haemoglobin, respRate, spo2 } from '../facts-builder.js';

const recorded = (fraction: number): Outcome<Fio2InForce> => ({
  kind: 'ok',
  value: { estimate: fraction, low: fraction, high: fraction, basis: 'recorded-fio2', at: undefined, onAir: false, source: 'recorded', delivery: undefined },
});

describe('computeSfRatio', () => {
  it('divides SpO2 by FiO2 and applies the published Rice cut-offs', () => {
    // Rice 2007: S/F 235 ~ P/F 200 and 315 ~ P/F 300 (published cut-offs, V)
    const result = computeSfRatio(spo2(92), recorded(0.4));
    expect(result.kind === 'ok' && result.value.value).toMatchObject({
      ratio: 230,
      low: 230,
      high: 230,
      spannedCutoffs: [],
      rice: 'below-235',
      fio2: { estimate: 0.4, source: 'recorded' },
    });
    const mild = computeSfRatio(spo2(94), recorded(0.31)); // 303: below 315
    expect(mild.kind === 'ok' && mild.value.value.rice).toBe('below-315');
  });

  describe('edge cases', () => {
    it('is unknown above 97 %, where the Rice relation does not hold', () => {
      // Rice 2007: exclude SpO2 > 97 % (check-values pitfall 1)
      expect(computeSfRatio(spo2(98), recorded(0.28)).kind).toBe('unknown');
      expect(computeSfRatio(undefined, recorded(0.28)).kind).toBe('unknown');
    });
  });
});

describe('computeRox', () => {
  it.each([
    // Roca 2016/2019 definition; check-values 3e (D)
    [92, 0.5, 30, 6.13],
    [88, 0.6, 32, 4.58],
    [90, 0.6, 35, 4.29],
  ])('gives ROX for SpO2 %s, FiO2 %s, RR %s as %s', (s, f, rr, expected) => {
    const result = computeRox({ onHighFlow: true, hoursOnHighFlow: 3, spo2: spo2(s), respRate: respRate(rr), fio2AtSpo2: recorded(f) });
    expect(result.kind === 'ok' && result.value.value.index).toBeCloseTo(expected, 2);
  });

  it('reads ROX 6.13 after 3 h as low risk', () => {
    // Roca 2019: >= 4.88 at 2, 6 or 12 h is linked with success
    const result = computeRox({ onHighFlow: true, hoursOnHighFlow: 3, spo2: spo2(92), respRate: respRate(30), fio2AtSpo2: recorded(0.5) });
    expect(result.kind === 'ok' && result.value.value.interpretation).toBe('low-risk');
  });

  describe('edge cases', () => {
    it('applies to high-flow nasal cannula only', () => {
      expect(computeRox({ onHighFlow: false, hoursOnHighFlow: 3, spo2: spo2(92), respRate: respRate(30), fio2AtSpo2: recorded(0.5) }).kind).toBe('unknown');
    });

    it('is indeterminate when the time on high flow is not known', () => {
      const result = computeRox({ onHighFlow: true, hoursOnHighFlow: undefined, spo2: spo2(92), respRate: respRate(30), fio2AtSpo2: recorded(0.5) });
      expect(result.kind === 'ok' && result.value.value.interpretation).toBe('indeterminate');
    });

    it('needs a respiratory rate', () => {
      const result = computeRox({ onHighFlow: true, hoursOnHighFlow: 3, spo2: spo2(92), respRate: undefined, fio2AtSpo2: recorded(0.5) });
      expect(result.kind === 'unknown' && result.missing).toStrictEqual(['respRatePerMin']);
    });
  });
});

describe('computeOxygenContent', () => {
  it('gives 20.0 mL/dL for Hb 15, saturation 98 % and PaO2 100 mmHg', () => {
    // check-values 3f (D): 1.34 x 15 x 0.98 + 0.003 x 100 = 20.00
    const result = computeOxygenContent({
      haemoglobin: haemoglobin(15),
      spo2: spo2(98),
      arterialGas: bloodGas({ ageMinutes: 10, pao2MmHg: 100, paco2MmHg: 40 }),
    });
    expect(result.kind === 'ok' && result.value.value).toBeCloseTo(20.0, 2);
  });

  it('gives 12.24 mL/dL for Hb 10, 90 % and PaO2 60', () => {
    // check-values 3f (D)
    const result = computeOxygenContent({ haemoglobin: haemoglobin(10), spo2: spo2(90), arterialGas: bloodGas({ ageMinutes: 10, pao2MmHg: 60 }) });
    expect(result.kind === 'ok' && result.value.value).toBeCloseTo(12.24, 2);
  });

  describe('edge cases', () => {
    it('derives SaO2 from PaO2 with Severinghaus when there is no SpO2', () => {
      // Severinghaus 1979: PO2 100 -> 97.75 % (check-values 3d, D); 1.34 x 15 x 0.9775 + 0.3 = 19.95
      const result = computeOxygenContent({ haemoglobin: haemoglobin(15), spo2: undefined, arterialGas: bloodGas({ ageMinutes: 10, pao2MmHg: 100 }) });
      expect(result.kind === 'ok' && result.value.value).toBeCloseTo(19.95, 1);
    });

    it('is unknown without haemoglobin, and without a PaO2 at SpO2 100 %', () => {
      expect(computeOxygenContent({ haemoglobin: undefined, spo2: spo2(95), arterialGas: undefined }).kind).toBe('unknown');
      expect(computeOxygenContent({ haemoglobin: haemoglobin(12), spo2: spo2(100), arterialGas: undefined }).kind).toBe('unknown');
    });
  });
});

describe('computeGasInterpretation', () => {
  it('reads pH 7.28 with PaCO2 8.2 kPa as hypercapnic', () => {
    // RCEM: pH < 7.35 is acidosis; BTS 2017: PaCO2 >= 6 kPa is hypercapnia
    const result = computeGasInterpretation(bloodGas({ ageMinutes: 20, ph: 7.28, paco2Kpa: 8.2, hco3: 28 }), BTS);
    expect(result.kind === 'ok' && result.value.hypercapnic).toBe(true);
  });

  describe('edge cases', () => {
    it('is unknown without a gas', () => {
      expect(computeGasInterpretation(undefined, BTS).kind).toBe('unknown');
    });
  });
});
