import { describe, expect, it } from 'vitest';
import {
  estimateHighFlowNasalCannula,
  highFlowNasalCannulaModel,
} from '../../../src/core/devices/high-flow-nasal-cannula.js';
import { openSourceFio2 } from '../../../src/core/devices/mixing.js';
import { okValue } from './expect-helpers.js';

const hfnc = (flowLPerMin: number, setFio2Fraction: number, respRatePerMin: number) =>
  okValue(estimateHighFlowNasalCannula({ flowLPerMin, setFio2Fraction, respRatePerMin }));

describe('high-flow nasal cannula', () => {
  it('runs up to 60 L/min', () => {
    // Annual Update in Intensive Care and Emergency Medicine 2017 (PMC5359952): up to 60 L/min in adults;
    // the 10 L/min lower bound is from memory
    expect(highFlowNasalCannulaModel.flowRangeLPerMin).toStrictEqual({ min: 10, max: 60 });
  });

  it('delivers the set FiO2 while its flow meets the peak inspiratory flow', () => {
    // mixing model; resting peak 40 L/min (4/3 × 30, docs/basis/devices.md)
    const value = hfnc(50, 0.6, 20);
    expect(value.fixedPerformance).toBe(true);
    expect(value.fio2.estimate).toBe(0.6);
    expect(value.fio2.high).toBe(0.6);
    expect(value.totalFlowLPerMin).toBe(50);
  });

  it('keeps the range narrow at a typical set flow', () => {
    // Li et al., Ann Intensive Care 11:164 (2021): median set flow 45 L/min at FiO2 about 0.62
    const { estimate, low } = hfnc(45, 0.62, 20).fio2;
    expect(estimate).toBe(0.62);
    expect(0.62 - low).toBeLessThan(0.05);
  });

  it('keeps the set FiO2 as its figure when the flow is below peak demand, and says what may be lost', () => {
    // Annual Update ICEM 2017 (V): adult HFNC delivers the blender FiO2 0.21-1.0; Roca 2019 read ROX at the
    // set FiO2. Mixing model (derived): 40 L/min at 0.6 against a 60 L/min peak (4/3 × 45) at RR 30.
    const value = hfnc(40, 0.6, 30);
    expect(value.fixedPerformance).toBe(false);
    expect(value.fio2).toStrictEqual({ estimate: 0.6, low: 0.6, high: 0.6 });
    expect(value.thresholdFio2).toStrictEqual({ fraction: 0.6, point: 'set' });
    expect(value.fio2Source).toBe('set');
    expect(value.model.kind).toBe('high-flow-set-fio2');
    expect(value.sourceKeys[0]).toBe('hfnc-2017');
    expect(value.notes.join(' ')).toContain('below the estimated peak inspiratory flow of 60 L/min');
    const lowest = Number(/as low as (\d+(?:\.\d)?) %/.exec(value.notes.join(' '))?.[1]);
    // the larger, faster breath draws in more air than the central one
    expect(lowest).toBeLessThanOrEqual(Math.round(openSourceFio2(0.6, 40, 60) * 1000) / 10);
    expect(lowest).toBeGreaterThan(21);
  });

  describe('edge cases', () => {
    it('needs the set FiO2 and the flow', () => {
      expect(estimateHighFlowNasalCannula({ flowLPerMin: 40 })).toMatchObject({
        kind: 'unknown',
        missing: ['setFio2Fraction'],
      });
      expect(estimateHighFlowNasalCannula({})).toMatchObject({
        kind: 'unknown',
        missing: ['setFio2Fraction', 'flowLPerMin'],
      });
    });

    it('refuses an FiO2 outside 0.21-1', () => {
      // HFNC FiO2 0.21-1.0 (Annual Update in ICEM 2017, PMC5359952; check-values 2a)
      expect(estimateHighFlowNasalCannula({ flowLPerMin: 40, setFio2Fraction: 1.2 }).kind).toBe('unknown');
    });

    it('still estimates above 60 L/min, with a note', () => {
      // up to 60 L/min in adults (PMC5359952; check-values 2a)
      const value = hfnc(70, 0.5, 20);
      expect(value.fio2.estimate).toBe(0.5);
      expect(value.notes.join(' ')).toContain('70 L/min is above the usual 10-60 L/min');
    });

    it('gives air at a set FiO2 of 0.21 whatever the flow', () => {
      // room air is FiO2 0.21 (common practice)
      expect(hfnc(20, 0.21, 30).fio2).toStrictEqual({ estimate: 0.21, low: 0.21, high: 0.21 });
    });
  });
});
