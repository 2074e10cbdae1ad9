import { describe, expect, it } from 'vitest';
import {
  VENTURI_ACCURACY_FRACTION,
  VENTURI_SETTINGS,
  entrainmentRatio,
  estimateVenturiMask,
  findVenturiSetting,
  venturiMaskModel,
  venturiTotalFlowLPerMin,
} from '../../../src/core/devices/venturi-mask.js';
import { expectWithin, okValue } from './expect-helpers.js';

const venturi = (setFio2Fraction: number, flowLPerMin: number, respRatePerMin?: number) =>
  okValue(
    estimateVenturiMask(
      respRatePerMin === undefined ? { setFio2Fraction, flowLPerMin } : { setFio2Fraction, flowLPerMin, respRatePerMin },
    ),
  );

describe('Venturi mask', () => {
  it.each([
    // check-values 2b, air entrainment ratio (V2 / derived); the table quotes 24 % and 28 % to one decimal
    // place, so those two are held to ± 0.05, the rest to ± 0.01
    { setting: 0.24, ratio: 25.3, tolerance: 0.05 },
    { setting: 0.28, ratio: 10.3, tolerance: 0.05 },
    { setting: 0.31, ratio: 6.9, tolerance: 0.01 },
    { setting: 0.35, ratio: 4.64, tolerance: 0.01 },
    { setting: 0.4, ratio: 3.16, tolerance: 0.01 },
    { setting: 0.5, ratio: 1.72, tolerance: 0.01 },
    { setting: 0.6, ratio: 1.03, tolerance: 0.01 },
  ])('entrains $ratio volumes of air per volume of oxygen at $setting', ({ setting, ratio, tolerance }) => {
    expectWithin(entrainmentRatio(setting), ratio, tolerance);
    // derived: the published form (100 − F%)/(F% − 21)
    const percent = Math.round(setting * 100);
    expectWithin(entrainmentRatio(setting), (100 - percent) / (percent - 21), 1e-9);
  });

  it('uses 21 %, not 20 %, for room air in the ratio', () => {
    // check-values pitfall 4: some teaching uses 20; with it 24 % would give (100 − 24)/(24 − 20) = 19
    expect(Math.abs(entrainmentRatio(0.24) - 19)).toBeGreaterThan(6);
    expectWithin(entrainmentRatio(0.24), 76 / 3, 1e-9);
  });

  it.each([
    // check-values 2b, Venturi total flow = Q_O2 × (1 + ratio) (derived), ± 0.2 L/min
    { setting: 0.24, flow: 2, total: 52.7 },
    { setting: 0.28, flow: 4, total: 45.1 },
    { setting: 0.31, flow: 6, total: 47.4 },
    { setting: 0.35, flow: 8, total: 45.1 },
    { setting: 0.4, flow: 10, total: 41.6 },
    { setting: 0.6, flow: 15, total: 30.4 },
    // check-values 2b, at 1.5 × the minimum flow (derived)
    { setting: 0.28, flow: 6, total: 67.7 },
    { setting: 0.4, flow: 15, total: 62.4 },
    { setting: 0.6, flow: 22.5, total: 45.6 },
  ])('delivers $total L/min in all at $setting on $flow L/min of oxygen', ({ setting, flow, total }) => {
    expectWithin(venturiTotalFlowLPerMin(flow, setting), total, 0.2);
    expectWithin(venturi(setting, flow, 20).totalFlowLPerMin, total, 0.2);
  });

  it.each([
    // BTS 2017, Table 4 (24 % at 2-3 L/min, 28 % at 4 L/min)
    { setting: 0.24, minimum: 2 },
    { setting: 0.28, minimum: 4 },
    // device labelling convention (common practice)
    { setting: 0.31, minimum: 6 },
    { setting: 0.35, minimum: 8 },
    { setting: 0.4, minimum: 10 },
    { setting: 0.6, minimum: 15 },
    // from memory
    { setting: 0.5, minimum: 12 },
  ])('needs at least $minimum L/min at $setting', ({ setting, minimum }) => {
    expect(findVenturiSetting(setting)?.minimumFlowLPerMin).toBe(minimum);
    expect(venturi(setting, minimum, 20).minimumFlowLPerMin).toBe(minimum);
  });

  it('offers the standard settings only', () => {
    // check-values 2a: 24, 28, 31, 35, 40, 60 % and a 50 % setting (common practice)
    expect(VENTURI_SETTINGS.map((s) => s.fio2Fraction)).toStrictEqual([0.24, 0.28, 0.31, 0.35, 0.4, 0.5, 0.6]);
  });

  it('is fixed-performance while its total flow meets the peak inspiratory flow', () => {
    // check-values 2b and BMJ 1984 on fixed-performance masks: fixed only while total flow exceeds peak
    // inspiratory flow; 24 % at 2 L/min gives 52.7 L/min against a resting peak of 40 L/min
    const value = venturi(0.24, 2, 20);
    expect(value.fixedPerformance).toBe(true);
    expect(value.fio2.estimate).toBe(0.24);
    expectWithin(value.peakInspiratoryFlowLPerMin, 40, 1e-9);
    expect(value.sourceKeys).toStrictEqual(['air-entrainment', 'bts-2017', 'jones-1984', 'device-fio2-tables']);
    expect(value.model.kind).toBe('air-entrainment');
    expect(value.fio2Source).toBe('set');
    expect(value.thresholdFio2).toStrictEqual({ fraction: 0.24, point: 'set' });
  });

  it.each([
    // Jones, Turner & Hughes, Lancet 1:1427 (1984): at rest the 24, 28, 35 and 40 % masks delivered within
    // 1.9 % of nominal at the recommended flows; minimum flows BTS 2017 Table 4 (24, 28 %), common practice
    { setting: 0.24, flow: 2 },
    { setting: 0.28, flow: 4 },
    { setting: 0.31, flow: 6 },
    { setting: 0.35, flow: 8 },
    { setting: 0.4, flow: 10 },
  ])('performs as set at $setting on its minimum flow at a resting rate', ({ setting, flow }) => {
    const value = venturi(setting, flow, 20);
    expect(value.fixedPerformance).toBe(true);
    expect(value.fio2.estimate).toBe(setting);
  });

  it('keeps a fixed-performance range within the measured accuracy of the 24-40 % settings', () => {
    // Jones, Turner & Hughes, Lancet 1:1427 (1984): within 1.9 % absolute of nominal at rest
    expect(VENTURI_ACCURACY_FRACTION).toBe(0.019);
    const { low, high } = venturi(0.24, 2, 16).fio2;
    expect(low).toBeGreaterThanOrEqual(0.24 - 0.019 - 1e-12);
    expect(high).toBeLessThanOrEqual(0.24 + 0.019 + 1e-12);
  });

  it('is not fixed-performance at 60 % and 15 L/min, and its range reaches the 50.3 % measured', () => {
    // check-values pitfall 3; Jones 1984: the 60 % setting measured 50.3 % at rest; total flow about 30 L/min
    const value = venturi(0.6, 15, 20);
    expect(value.fixedPerformance).toBe(false);
    // the figure is the setting; what the mask may fall short by is in the range and the notes
    expect(value.fio2.estimate).toBe(0.6);
    expect(value.fio2.low).toBeLessThanOrEqual(0.503);
    expect(value.notes.join(' ')).toMatch(/mixing model puts the FiO2 at about 0\.5\d/);
    expect(value.fio2.high).toBeGreaterThanOrEqual(0.6);
    expect(value.notes.join(' ')).toContain('50.3 %');
  });

  it('reaches lower when the total flow falls short of demand, but not below the measured accuracy', () => {
    // check-values 2b: below peak inspiratory flow the FiO2 is not fixed; room air is drawn in.
    // Jones 1984 (V): the 24-40 % settings were within 1.9 % absolute of nominal.
    const fast = venturi(0.4, 10, 36);
    expect(fast.fixedPerformance).toBe(false);
    expect(fast.fio2.low).toBeCloseTo(0.4 - 0.019, 9);
    expect(fast.fio2.estimate).toBe(0.4);
    expect(fast.fio2.low).toBeLessThanOrEqual(venturi(0.4, 10, 20).fio2.low);
    expect(fast.notes.join(' ')).toContain('room air is drawn in');
    expect(fast.thresholdFio2).toStrictEqual({ fraction: 0.4, point: 'set' });
  });

  it("is only an estimate below the setting's minimum flow, reaching down towards room air", () => {
    // BTS 2017 Table 4 (V): 28 % needs 4 L/min; below it entrainment is not assured
    const low = venturi(0.28, 2, 20);
    expect(low.fio2Source).toBe('estimated');
    expect(low.thresholdFio2.point).toBe('low-end');
    expect(low.fio2.low).toBeLessThan(0.28 - 0.019);
    expect(low.fio2.high).toBeLessThanOrEqual(0.28 + 0.019);
  });

  it('advises 1.5 × the minimum flow when the rate is above 30/min', () => {
    // BTS 2017, Table 4; Jones 1984: raise the O2 flow by half for RR > 30, setting unchanged
    const notes = venturi(0.28, 4, 34).notes.join(' ');
    expect(notes).toContain('raise the O2 flow to 1.5 × the minimum, 6 L/min');
    expect(venturi(0.28, 6, 34).notes.join(' ')).toContain('the flow already meets 1.5 × the minimum, 6 L/min');
    expect(venturi(0.28, 4, 30).notes.join(' ')).not.toContain('1.5 ×');
  });

  describe('edge cases', () => {
    it('needs a setting and a flow', () => {
      expect(estimateVenturiMask({ flowLPerMin: 4 })).toMatchObject({ kind: 'unknown', missing: ['setFio2Fraction'] });
      expect(estimateVenturiMask({ setFio2Fraction: 0.28 })).toMatchObject({ kind: 'unknown', missing: ['flowLPerMin'] });
    });

    it('refuses a non-standard setting rather than guess the nearest', () => {
      expect(estimateVenturiMask({ setFio2Fraction: 0.33, flowLPerMin: 6 })).toStrictEqual({
        kind: 'unknown',
        reason:
          '33 % is not a standard Venturi setting (24, 28, 31, 35, 40, 50, 60 %): its entrainment ratio and minimum flow are not known.',
      });
    });

    it('matches a setting despite floating-point rounding', () => {
      expect(findVenturiSetting(28 / 100 + 1e-9)?.fio2Fraction).toBe(0.28);
    });

    it('refuses a setting written as a percentage', () => {
      expect(estimateVenturiMask({ setFio2Fraction: 28, flowLPerMin: 4 }).kind).toBe('unknown');
    });

    it('still estimates below the minimum flow, not as fixed-performance, with a note', () => {
      const value = venturi(0.28, 2, 16);
      expect(value.fixedPerformance).toBe(false);
      expect(value.notes.join(' ')).toContain('2 L/min is below the 4 L/min minimum for the 28 % setting (BTS 2017)');
    });

    it('widens the range when the rate is not known', () => {
      // Jones 1984 (V): the 60 % setting measured 50.3 % at rest, the floor of its envelope
      const known = venturi(0.6, 15, 20).fio2;
      const unknown = venturi(0.6, 15).fio2;
      expect(unknown.low).toBeLessThanOrEqual(known.low);
      expect(unknown.low).toBeCloseTo(0.503, 9);
      expect(unknown.estimate).toBe(known.estimate);
    });

    it('has a flow range from the 24 % minimum to 1.5 × the 60 % minimum', () => {
      // BTS 2017, Table 4: 2 L/min at 24 %; 1.5 × 15 L/min at 60 %
      expect(venturiMaskModel.flowRangeLPerMin).toStrictEqual({ min: 2, max: 22.5 });
    });
  });
});
