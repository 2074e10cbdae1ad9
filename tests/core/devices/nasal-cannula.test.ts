import { describe, expect, it } from 'vitest';
import {
  END_EXPIRATORY_PAUSE_FRACTION,
  NASAL_CANNULA_COMFORTABLE_UP_TO_L_PER_MIN,
  estimateNasalCannula,
  nasalCannulaEnvelope,
  nasalCannulaModel,
} from '../../../src/core/devices/nasal-cannula.js';
import { expectWithin, okValue } from './expect-helpers.js';

const atRest = (flowLPerMin: number) => okValue(estimateNasalCannula({ flowLPerMin, respRatePerMin: 20 }));

describe('nasal cannula', () => {
  it('covers 1-6 L/min in adults', () => {
    // BTS 2017, Tables 2 and 4
    expect(nasalCannulaModel.flowRangeLPerMin).toStrictEqual({ min: 1, max: 6 });
    expect(nasalCannulaModel.kind).toBe('nasal-cannula');
  });

  it.each([
    // "rule of 4": FCCS (SCCM 2016) as cited by fpnotebook; Egan-type tables (common practice / V2), ± 0.05
    { flow: 1, expected: 0.24 },
    { flow: 2, expected: 0.28 },
    { flow: 3, expected: 0.32 },
    { flow: 4, expected: 0.36 },
    { flow: 5, expected: 0.4 },
    { flow: 6, expected: 0.44 },
  ])('estimates about $expected at $flow L/min with a normal breathing pattern', ({ flow, expected }) => {
    expectWithin(atRest(flow).fio2.estimate, expected, 0.05);
  });

  it.each([1, 2, 3, 4])('stays within 0.24-0.35 at %i L/min', (flow) => {
    // Therapeutic Guidelines (Australia), Respiratory: 1-4 L/min gives 0.24-0.35 (V2), ± 0.03
    const { estimate } = atRest(flow).fio2;
    expect(estimate).toBeGreaterThanOrEqual(0.24 - 0.03);
    expect(estimate).toBeLessThanOrEqual(0.35 + 0.03);
  });

  it.each([
    // FCCS (SCCM 2016) rule of 4 ± 0.05 (C / V2), widened to the measured 2.5 % per L/min at the low end
    // (check-values pitfall 9, V2): the envelope is their union
    { flow: 1, low: 0.21, high: 0.29 },
    { flow: 2, low: 0.23, high: 0.33 },
    { flow: 3, low: 0.27, high: 0.37 },
    { flow: 4, low: 0.31, high: 0.41 },
    { flow: 5, low: 0.335, high: 0.45 },
    { flow: 6, low: 0.36, high: 0.49 },
  ])('keeps $flow L/min within its published envelope $low-$high', ({ flow, low, high }) => {
    const envelope = nasalCannulaEnvelope(flow);
    expectWithin(envelope.low, low, 1e-9);
    expectWithin(envelope.high, high, 1e-9);
    const { fio2 } = okValue(estimateNasalCannula({ flowLPerMin: flow, respRatePerMin: 12 }));
    expect(fio2.low).toBeGreaterThanOrEqual(low - 1e-9);
    expect(fio2.high).toBeLessThanOrEqual(high + 1e-9);
  });

  it('reproduces the textbook anatomic-reservoir example at 6 L/min', () => {
    // Shapiro et al., Clinical Application of Blood Gases: VT 500, RR 20, Ti 1 s, 6 L/min → 0.447 with 0.21 air
    // (V2, from memory), ± 0.01
    expectWithin(atRest(6).fio2.estimate, 0.447, 0.01);
  });

  it.each([1, 2, 3, 4, 5, 6])('brackets the measured rise of 2.5-3.8 % per L/min at %i L/min', (flow) => {
    // check-values pitfall 9: measured tracheal FiO2 rises about 2.5-3.8 % per L/min
    const { low, high } = atRest(flow).fio2;
    expect(low).toBeLessThanOrEqual(0.21 + 0.025 * flow);
    expect(high).toBeGreaterThanOrEqual(0.21 + 0.038 * flow);
  });

  it('falls with tachypnoea, never below the published envelope', () => {
    // check-values pitfall 9: the estimate falls with tachypnoea; rule of 4 at 4 L/min 0.36 ± 0.05 (FCCS, C / V2)
    const rest = atRest(4).fio2;
    const fast = okValue(estimateNasalCannula({ flowLPerMin: 4, respRatePerMin: 35 })).fio2;
    expect(fast.estimate).toBeLessThan(rest.estimate);
    expect(fast.low).toBeLessThanOrEqual(rest.low);
    expect(fast.high).toBeLessThanOrEqual(rest.high);
    expect(fast.low).toBeGreaterThanOrEqual(0.36 - 0.05 - 1e-9);
  });

  it('widens the range when the respiratory rate is not known', () => {
    const known = atRest(3).fio2;
    const unknown = okValue(estimateNasalCannula({ flowLPerMin: 3 })).fio2;
    expect(unknown.estimate).toBe(known.estimate);
    expect(unknown.low).toBeLessThanOrEqual(known.low);
    expect(unknown.high).toBeGreaterThanOrEqual(known.high);
    expect(unknown.high - unknown.low).toBeGreaterThan(known.high - known.low);
  });

  it('flags the estimate for P/F and A-a use and names its basis', () => {
    // check-values pitfall 9: never use the estimate in P/F or A-a without flagging it
    const value = atRest(2);
    expect(value.fixedPerformance).toBe(false);
    expect(value.notes[0]).toContain('P/F');
    expect(value.sourceKeys).toStrictEqual(['anatomic-reservoir', 'bts-2017', 'device-fio2-tables']);
    expect(value.model.kind).toBe('anatomic-reservoir');
    expect(value.fio2Source).toBe('estimated');
  });

  it('notes that flows above 4 L/min are often poorly tolerated', () => {
    // BTS 2017: above about 4 L/min nasal cannulae are often poorly tolerated
    expect(NASAL_CANNULA_COMFORTABLE_UP_TO_L_PER_MIN).toBe(4);
    expect(atRest(4).notes.join(' ')).not.toContain('poorly tolerated');
    expect(atRest(5).notes.join(' ')).toContain('poorly tolerated (BTS 2017)');
  });

  it('documents the end-expiratory pause it assumes', () => {
    // this service's calibration (docs/basis/devices.md), checked above against the rule-of-4 table
    expect(END_EXPIRATORY_PAUSE_FRACTION).toBe(0.25);
  });

  describe('edge cases', () => {
    it('needs a flow', () => {
      expect(estimateNasalCannula({ respRatePerMin: 20 })).toStrictEqual({
        kind: 'unknown',
        reason: 'The delivered FiO2 of a nasal cannula cannot be estimated without the flow (L/min).',
        missing: ['flowLPerMin'],
      });
    });

    it('refuses a negative flow', () => {
      expect(estimateNasalCannula({ flowLPerMin: -2 }).kind).toBe('unknown');
    });

    it('gives room air at no flow', () => {
      expect(okValue(estimateNasalCannula({ flowLPerMin: 0, respRatePerMin: 20 })).fio2).toStrictEqual({
        estimate: 0.21,
        low: 0.21,
        high: 0.21,
      });
    });

    it('still estimates above 6 L/min, with a note', () => {
      const value = okValue(estimateNasalCannula({ flowLPerMin: 8, respRatePerMin: 20 }));
      expect(value.fio2.estimate).toBeGreaterThan(atRest(6).fio2.estimate);
      expect(value.notes).toContain('8 L/min is above the usual 1-6 L/min for a nasal cannula (BTS 2017); estimated anyway.');
    });

    it('ignores a set FiO2 and says so', () => {
      const value = okValue(estimateNasalCannula({ flowLPerMin: 2, setFio2Fraction: 0.28, respRatePerMin: 20 }));
      expect(value.fio2).toStrictEqual(atRest(2).fio2);
      expect(value.notes.join(' ')).toContain('has no FiO2 setting');
    });
  });
});
