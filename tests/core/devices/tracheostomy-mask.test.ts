import { describe, expect, it } from 'vitest';
import { mixingFio2 } from '../../../src/core/devices/mixing.js';
import { estimateTracheostomyMask, tracheostomyMaskModel } from '../../../src/core/devices/tracheostomy-mask.js';
import { expectWithin, okValue } from './expect-helpers.js';

describe('tracheostomy mask', () => {
  it('mixes like a face mask: 15 L/min against 30 L/min gives about 0.6', () => {
    // mass balance 0.21 + 0.79 × 15/30 (derived); ICS/NTSP tracheostomy guidance as quoted: up to about 0.6
    // (V2, from memory), ± 0.05
    const value = okValue(estimateTracheostomyMask({ flowLPerMin: 15, respRatePerMin: 20 }));
    expectWithin(value.fio2.estimate, Math.min(0.6, mixingFio2(15, 30)), 1e-12);
    expectWithin(value.fio2.estimate, 0.6, 0.05);
    // kept at or below the usual ceiling of about 0.6 (same guidance)
    expect(value.fio2.high).toBeLessThanOrEqual(0.6);
    // same guidance: perhaps 0.7 at most (V2, from memory)
    expect(value.fio2.high).toBeLessThanOrEqual(0.7 + 0.05);
    expect(value.fixedPerformance).toBe(false);
  });

  it('carries a wide range and the T-piece note', () => {
    // ICS/NTSP tracheostomy guidance as quoted: variable performance; T-piece for higher needs (V2)
    const value = okValue(estimateTracheostomyMask({ flowLPerMin: 10 }));
    expect(value.fio2.high - value.fio2.low).toBeGreaterThan(0.15);
    expect(value.notes.join(' ')).toContain('T-piece');
    expect(value.notes[0]).toContain('P/F');
    expect(tracheostomyMaskModel.flowRangeLPerMin).toStrictEqual({ min: 5, max: 15 });
  });

  it('reads a set FiO2 as an air-entrainment humidifier setting', () => {
    // mass balance: 10 L/min at 40 % entrains 3.16:1 → 41.6 L/min (check-values 2b, derived), ± 0.2
    const value = okValue(estimateTracheostomyMask({ flowLPerMin: 10, setFio2Fraction: 0.4, respRatePerMin: 20 }));
    expectWithin(value.totalFlowLPerMin, 41.6, 0.2);
    expectWithin(value.entrainmentRatio, 3.16, 0.01);
    // mixing model: 41.6 L/min meets the 30 L/min mean flow at rest, so the estimate is the setting
    expect(value.fio2.estimate).toBe(0.4);
    // but not the 50.4 L/min of 0.6 L breaths at 28/min, so the range reaches below it
    const faster = okValue(estimateTracheostomyMask({ flowLPerMin: 10, setFio2Fraction: 0.4, respRatePerMin: 28 }));
    expectWithin(faster.fio2.low, mixingFio2(41.58, 50.4, 0.4), 0.001);
    expect(faster.fio2.low).toBeLessThan(0.4);
  });

  describe('edge cases', () => {
    it('needs a flow', () => {
      expect(estimateTracheostomyMask({ setFio2Fraction: 0.4 })).toMatchObject({ kind: 'unknown', missing: ['flowLPerMin'] });
    });

    it('gives air for humidified air and treats a setting of 1 as pure oxygen', () => {
      const air = okValue(estimateTracheostomyMask({ flowLPerMin: 10, setFio2Fraction: 0.21, respRatePerMin: 20 }));
      expect(air.fio2).toStrictEqual({ estimate: 0.21, low: 0.21, high: 0.21 });
      expect(air.totalFlowLPerMin).toBeUndefined();
      const pure = okValue(estimateTracheostomyMask({ flowLPerMin: 10, setFio2Fraction: 1, respRatePerMin: 20 }));
      const plain = okValue(estimateTracheostomyMask({ flowLPerMin: 10, respRatePerMin: 20 }));
      expect(pure.fio2).toStrictEqual(plain.fio2);
    });
  });
});
