import { describe, expect, it } from 'vitest';
import { computeGasPhysiology } from '../../../src/core/assessment/gas-physiology.js';
import type { Fio2InForce } from '../../../src/core/assessment/types.js';
import type { Outcome } from '../../../src/core/types.js';
import { BTS, bloodGas } from '../facts-builder.js';

const recorded = (fraction: number): Outcome<Fio2InForce> => ({
  kind: 'ok',
  value: { estimate: fraction, low: fraction, high: fraction, basis: 'recorded-fio2', at: undefined, onAir: fraction <= 0.21, source: 'recorded', delivery: undefined },
});

function compute(parts: { fio2: number; paco2MmHg: number; pao2MmHg: number; age?: number; pb?: number }) {
  return computeGasPhysiology({
    arterialGas: bloodGas({ ageMinutes: 20, ph: 7.4, paco2MmHg: parts.paco2MmHg, pao2MmHg: parts.pao2MmHg }),
    fio2AtGas: recorded(parts.fio2),
    barometricPressureMmHg: parts.pb ?? 760,
    ageYears: parts.age ?? 60,
    previous: undefined,
    policy: BTS,
  });
}

const ok = <T>(o: Outcome<{ value: T }>): T => {
  if (o.kind !== 'ok') throw new Error(`unknown: ${o.reason}`);
  return o.value.value;
};

describe('computeGasPhysiology', () => {
  it.each([
    // check-values 3a (D; constants PH2O 47 mmHg and R 0.8 are V): simplified PAO2 and PIO2
    { fio2: 0.21, pb: 760, paco2MmHg: 40, pao2: 95, pio2: 149.7, pao2Alv: 99.7, aa: 4.7 },
    { fio2: 0.21, pb: 760, paco2MmHg: 40, pao2: 60, pio2: 149.7, pao2Alv: 99.7, aa: 39.7 },
    { fio2: 0.21, pb: 760, paco2MmHg: 30, pao2: 65, pio2: 149.7, pao2Alv: 112.2, aa: 47.2 },
    { fio2: 0.4, pb: 760, paco2MmHg: 40, pao2: 80, pio2: 285.2, pao2Alv: 235.2, aa: 155.2 },
    { fio2: 0.21, pb: 634.2, paco2MmHg: 40, pao2: 60, pio2: 123.3, pao2Alv: 73.3, aa: 13.3 },
  ])('gives PIO2 $pio2, PAO2 $pao2Alv and A-a $aa at FiO2 $fio2, PB $pb, PaCO2 $paco2MmHg', (row) => {
    const result = compute({ fio2: row.fio2, pb: row.pb, paco2MmHg: row.paco2MmHg, pao2MmHg: row.pao2 });
    expect(ok(result.inspiredPo2)).toBeCloseTo(row.pio2, 1);
    expect(ok(result.alveolarPo2)).toBeCloseTo(row.pao2Alv, 1);
    expect(ok(result.aaGradient)).toBeCloseTo(row.aa, 1);
  });

  it('gives P/F 285.7 for PaO2 60 on air, in the Berlin mild band', () => {
    // check-values 3e (D); Berlin 2012: 200 < P/F <= 300 is mild
    const pf = ok(compute({ fio2: 0.21, paco2MmHg: 40, pao2MmHg: 60 }).pfRatio);
    expect(pf.ratio).toBeCloseTo(285.7, 1);
    expect(pf.berlin).toBe('mild');
  });

  it('compares with the age norm on air only', () => {
    // age/4 + 4 at 60 years = 19 mmHg (check-values 3c; common practice)
    expect(ok(compute({ fio2: 0.21, paco2MmHg: 40, pao2MmHg: 80 }).expectedAaGradient)).toBe(19);
    // FiO2 0.4: "age norms do not apply on oxygen" (check-values 3a)
    expect(compute({ fio2: 0.4, paco2MmHg: 40, pao2MmHg: 80 }).expectedAaGradient).toStrictEqual({
      kind: 'unknown',
      reason: 'the age-expected A-a gradient applies on air only',
    });
  });

  it('shows its working with the patient numbers and the FiO2 basis', () => {
    const pao2 = compute({ fio2: 0.21, paco2MmHg: 40, pao2MmHg: 95 }).alveolarPo2;
    expect(pao2.kind === 'ok' && pao2.value.computation).toStrictEqual({
      name: 'Alveolar PO2 (alveolar gas equation)',
      formula: 'PAO2 = FiO2 × (PB − PH2O) − PaCO2 / R',
      substituted: '0.21 × (760 − 47) − 40 / 0.8 (FiO2 as recorded nearest the measurement)',
      result: '100 mmHg',
      sourceKey: 'alveolar-gas',
    });
  });

  it('hints at hypoventilation when PaCO2 is high and the gradient normal on air', () => {
    // PaCO2 60 on air: PAO2 74.7 (check-values 3a); PaO2 70 gives A-a 4.7, normal for age
    const result = compute({ fio2: 0.21, paco2MmHg: 60, pao2MmHg: 70 });
    expect(result.mechanism.kind === 'ok' && result.mechanism.value.kind).toBe('hypoventilation');
  });

  describe('edge cases', () => {
    it('gives PaO2-based numbers only from an arterial gas', () => {
      const result = computeGasPhysiology({
        arterialGas: undefined,
        fio2AtGas: recorded(0.28),
        barometricPressureMmHg: 760,
        ageYears: 70,
        previous: undefined,
        policy: BTS,
      });
      expect(result.alveolarPo2).toStrictEqual({ kind: 'unknown', reason: 'no current arterial gas', missing: ['arterial blood gas'] });
      expect(result.pfRatio.kind).toBe('unknown');
    });

    it('keeps the inspired PO2 but no PAO2 when the gas lacks PaCO2', () => {
      const result = computeGasPhysiology({
        arterialGas: bloodGas({ ageMinutes: 5, pao2MmHg: 70 }),
        fio2AtGas: recorded(0.28),
        barometricPressureMmHg: 760,
        ageYears: 70,
        previous: undefined,
        policy: BTS,
      });
      expect(result.inspiredPo2.kind).toBe('ok');
      expect(result.alveolarPo2.kind).toBe('unknown');
      expect(result.alveolarPo2.kind === 'unknown' && result.alveolarPo2.missing).toStrictEqual(['paco2MmHg']);
    });

    it('is unknown rather than throwing for an impossible FiO2', () => {
      const result = compute({ fio2: 1.4, paco2MmHg: 40, pao2MmHg: 80 });
      expect(result.inspiredPo2.kind).toBe('unknown');
    });

    it('needs the age for the mechanism hint', () => {
      const result = computeGasPhysiology({
        arterialGas: bloodGas({ ageMinutes: 5, paco2MmHg: 40, pao2MmHg: 70 }),
        fio2AtGas: recorded(0.21),
        barometricPressureMmHg: 760,
        ageYears: undefined,
        previous: undefined,
        policy: BTS,
      });
      expect(result.mechanism.kind).toBe('unknown');
      expect(result.aaGradient.kind).toBe('ok');
    });
  });
});
