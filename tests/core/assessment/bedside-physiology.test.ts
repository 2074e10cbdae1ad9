import { describe, expect, it } from 'vitest';
import {
  computeGasInterpretation,
  computeOxygenContent,
  computeRox,
  computeSfRatio,
  highFlowAtReading,
} from '../../../src/core/assessment/bedside-physiology.js';
import type { HighFlowAtReading } from '../../../src/core/assessment/bedside-physiology.js';
import type { Fio2InForce } from '../../../src/core/assessment/types.js';
import type { Outcome } from '../../../src/core/types.js';
import { BTS, NOW, activeOrder, bloodGas, haemoglobin, minutesAgo, o2Flow, oxygenOrder, respRate, spo2 } from '../facts-builder.js';

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

const onHighFlowFor = (hours: number | undefined, orderedSetFio2?: number): HighFlowAtReading => ({
  orderedSetFio2,
  hoursOnHighFlow: hours,
  startBasis: hours === undefined ? 'no high-flow order in force says when it was written' : 'from the earliest high-flow order',
});
const estimated = (fraction: number): Outcome<Fio2InForce> => ({
  kind: 'ok',
  value: {
    estimate: fraction,
    low: fraction - 0.1,
    high: fraction,
    basis: 'order-estimate',
    source: 'estimated',
    delivery: undefined,
    at: undefined,
    onAir: false,
  },
});

describe('computeRox', () => {
  it.each([
    // Roca 2016/2019 definition; check-values 3e (D)
    [92, 0.5, 30, 6.13],
    [88, 0.6, 32, 4.58],
    [90, 0.6, 35, 4.29],
  ])('gives ROX for SpO2 %s, FiO2 %s, RR %s as %s', (s, f, rr, expected) => {
    const result = computeRox({ highFlow: onHighFlowFor(3), spo2: spo2(s), respRate: respRate(rr), fio2AtSpo2: recorded(f) });
    expect(result.kind === 'ok' && result.value.value.index).toBeCloseTo(expected, 2);
  });

  it('reads ROX 6.13 after 3 h as low risk', () => {
    // Roca 2019: >= 4.88 at 2, 6 or 12 h is linked with success
    const result = computeRox({ highFlow: onHighFlowFor(3), spo2: spo2(92), respRate: respRate(30), fio2AtSpo2: recorded(0.5) });
    expect(result.kind === 'ok' && result.value.value.interpretation).toBe('low-risk');
  });

  it.each([
    // Roca 2019 (check-values 3e, V): failure below 2.85 at 2 h, 3.47 at 6 h, 3.85 at 12 h
    [2, 2, 2.85],
    [5.9, 2, 2.85],
    [6, 6, 3.47],
    [11.9, 6, 3.47],
    [12, 12, 3.85],
    [30, 12, 3.85], // carried forward beyond 12 h (our cautious choice)
  ])('after %s h applies the %s-h threshold %s', (hours, timePoint, failureBelow) => {
    const result = computeRox({ highFlow: onHighFlowFor(hours), spo2: spo2(90), respRate: respRate(30), fio2AtSpo2: recorded(0.6) });
    expect(result.kind === 'ok' && result.value.value.threshold).toStrictEqual({ timePoint, failureBelow, startKnown: true });
  });

  it('uses the set FiO2 of the high-flow order, never a mixing estimate', () => {
    // Roca 2019 definition with the set FiO2: (86 / 0.7) / 32 = 3.84
    const result = computeRox({ highFlow: onHighFlowFor(6, 0.7), spo2: spo2(86), respRate: respRate(32), fio2AtSpo2: estimated(0.55) });
    expect(result.kind === 'ok' && result.value.value.fio2Fraction).toBe(0.7);
    expect(result.kind === 'ok' && result.value.value.index).toBeCloseTo(86 / 0.7 / 32, 6);
    expect(result.kind === 'ok' && result.value.computation.substituted).toContain('set FiO2 of the high-flow order');
  });

  it('prefers the FiO2 recorded at the reading to the ordered setting', () => {
    // A recorded FiO2 (LOINC 3150-0) on high flow is the blender setting in use (common practice)
    const result = computeRox({ highFlow: onHighFlowFor(6, 0.5), spo2: spo2(90), respRate: respRate(30), fio2AtSpo2: recorded(0.8) });
    expect(result.kind === 'ok' && result.value.value.fio2Fraction).toBe(0.8);
  });

  describe('edge cases', () => {
    it('applies to high-flow nasal cannula only', () => {
      expect(computeRox({ highFlow: undefined, spo2: spo2(92), respRate: respRate(30), fio2AtSpo2: recorded(0.5) }).kind).toBe('unknown');
    });

    it('is unknown on high flow when no set FiO2 is recorded or ordered', () => {
      const result = computeRox({ highFlow: onHighFlowFor(3), spo2: spo2(92), respRate: respRate(30), fio2AtSpo2: estimated(0.5) });
      expect(result.kind === 'unknown' && result.missing).toStrictEqual(['FiO2']);
    });

    it('uses the strictest, 12-h, threshold when the start of high flow is unknown, and says so', () => {
      // Roca 2019: 3.85 at 12 h is the highest failure threshold. (88 / 0.7) / 34 = 3.70: below 3.85,
      // though above the 2-h (2.85) and 6-h (3.47) thresholds.
      const result = computeRox({ highFlow: onHighFlowFor(undefined), spo2: spo2(88), respRate: respRate(34), fio2AtSpo2: recorded(0.7) });
      expect(result.kind === 'ok' && result.value.value.threshold).toStrictEqual({ timePoint: 12, failureBelow: 3.85, startKnown: false });
      expect(result.kind === 'ok' && result.value.value.interpretation).toBe('high-risk');
      expect(result.kind === 'ok' && result.value.value.thresholdNote).toBe(
        'start of high flow unknown (no high-flow order in force says when it was written): the 12-h threshold, 3.85, the strictest, was used',
      );
    });

    it('gives no threshold before 2 h, where Roca 2019 validated none', () => {
      const result = computeRox({ highFlow: onHighFlowFor(1.5), spo2: spo2(85), respRate: respRate(40), fio2AtSpo2: recorded(0.9) });
      expect(result.kind === 'ok' && result.value.value.threshold).toBeUndefined();
      expect(result.kind === 'ok' && result.value.value.interpretation).toBe('indeterminate');
    });

    it('needs a respiratory rate', () => {
      const result = computeRox({ highFlow: onHighFlowFor(3), spo2: spo2(92), respRate: undefined, fio2AtSpo2: recorded(0.5) });
      expect(result.kind === 'unknown' && result.missing).toStrictEqual(['respRatePerMin']);
    });
  });
});

describe('highFlowAtReading', () => {
  const hfnc = { device: 'high-flow-nasal-cannula' as const, flowLPerMin: 45, setFio2Fraction: 0.6 };

  it('dates high flow from the earliest high-flow order on record', () => {
    const result = highFlowAtReading([activeOrder({ ...hfnc, authoredOn: minutesAgo(7 * 60) })], oxygenOrder(hfnc), [], spo2(90), NOW);
    expect(result?.hoursOnHighFlow).toBeCloseTo(7, 6);
    expect(result?.orderedSetFio2).toBe(0.6);
    expect(result?.startBasis).toBe('from the earliest high-flow order, written 7 h ago');
  });

  it('moves the start earlier when a recorded flow only high flow reaches comes first', () => {
    // 45 L/min is above every conventional device's flow range (BTS 2017 Table 2; check-values 2a)
    const result = highFlowAtReading([activeOrder({ ...hfnc, authoredOn: minutesAgo(60) })], undefined, [o2Flow(45, 180), o2Flow(45, 20)], spo2(90), NOW);
    expect(result?.hoursOnHighFlow).toBeCloseTo(3, 6);
    expect(result?.startBasis).toBe('from the first recorded high flow, 3 h ago, before the earliest high-flow order');
  });

  it('leaves the start unknown when no high-flow order carries a time, even with recorded high flow', () => {
    const result = highFlowAtReading([activeOrder({ ...hfnc, authoredOn: undefined })], undefined, [o2Flow(50, 200)], spo2(90), NOW);
    expect(result?.hoursOnHighFlow).toBeUndefined();
    expect(result?.startBasis).toContain('no high-flow order in force says when it began');
  });

  describe('edge cases', () => {
    it('does not count a new high-flow order written after the reading: it is the response to it', () => {
      expect(highFlowAtReading([], oxygenOrder({ ...hfnc, authoredOn: NOW.toISOString() }), [], spo2(88, 15), NOW)).toBeUndefined();
    });

    it('does not read an ordinary flow as high flow', () => {
      // 15 L/min is a reservoir mask's flow (BTS 2017 Table 2)
      expect(highFlowAtReading([], undefined, [o2Flow(15, 30)], spo2(90), NOW)).toBeUndefined();
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
