import { describe, expect, it } from 'vitest';
import {
  DEFAULT_RESP_RATE_PER_MIN,
  DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN,
  INSPIRATORY_FLOW_RAMP_FRACTION,
  PEAK_TO_MEAN_INSPIRATORY_FLOW,
  RESTING_INSPIRATORY_FRACTION,
  RESTING_TIDAL_VOLUME_L,
  TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN,
  demandNotes,
  estimateInspiratoryDemand,
  expiratoryTimeS,
  inspiratoryTimeS,
  meanInspiratoryFlowLPerMin,
  minuteVentilationLPerMin,
  peakInspiratoryFlowLPerMin,
} from '../../../src/core/devices/inspiratory-demand.js';
import { expectWithin } from './expect-helpers.js';

const resting = { tidalVolumeL: 0.5, respRatePerMin: 20, inspiratoryFraction: 1 / 3 };

describe('inspiratory demand', () => {
  it('assumes the resting pattern of the worked examples', () => {
    // check-values 2b: VT 0.5 L, RR 20, Ti/Ttot 1/3 (derived from the mass balance)
    expect(RESTING_TIDAL_VOLUME_L).toBe(0.5);
    expect(RESTING_INSPIRATORY_FRACTION).toBe(1 / 3);
    expect(DEFAULT_RESP_RATE_PER_MIN).toBe(20);
  });

  it('gives a minute ventilation of 10 L/min and a mean inspiratory flow of 30 L/min at rest', () => {
    // check-values 2b: V̇E 10 L/min, V̇insp = V̇E × Ttot/Ti = 30 L/min (derived), ± 0.001
    expectWithin(minuteVentilationLPerMin(resting), 10, 0.001);
    expectWithin(meanInspiratoryFlowLPerMin(resting), 30, 0.001);
    expectWithin(estimateInspiratoryDemand(20).meanFlowLPerMin, (0.5 * 20) / (1 / 3), 0.001);
  });

  it('times a resting breath at 1 s in and 2 s out', () => {
    // check-values 2b, Shapiro worked example: Ti 1 s, Te 2 s at RR 20 (V2, from memory)
    expectWithin(inspiratoryTimeS(resting), 1, 1e-9);
    expectWithin(expiratoryTimeS(resting), 2, 1e-9);
  });

  it('puts the peak at 4/3 × the mean, the ratio for its trapezoidal flow profile', () => {
    // this service's calibration (docs/basis/devices.md): flow ramps over the first and last quarter of
    // inspiration, so peak = mean / (1 − 0.25)
    expect(INSPIRATORY_FLOW_RAMP_FRACTION).toBe(0.25);
    expectWithin(PEAK_TO_MEAN_INSPIRATORY_FLOW, 4 / 3, 1e-12);
    expectWithin(peakInspiratoryFlowLPerMin(resting), 40, 1e-9);
    expectWithin(estimateInspiratoryDemand(20).peakFlowLPerMin, 40, 1e-9);
  });

  it('puts the resting peak within one SD of the peak flow measured in hypoxaemic adults, above its mean', () => {
    // Li et al., Ann Intensive Care 11:164 (2021): measured peak tidal inspiratory flow 34 ± 9 L/min
    const { peakFlowLPerMin } = estimateInspiratoryDemand(undefined);
    expect(peakFlowLPerMin).toBeGreaterThan(34);
    expect(peakFlowLPerMin).toBeLessThanOrEqual(34 + 9);
  });

  it('keeps the resting peak below the total flow of the 24-40 % Venturi settings at their minimum flows', () => {
    // Jones 1984: at rest the 24-40 % settings delivered within 1.9 % of nominal; their lowest total flow is
    // 41.6 L/min (40 % at 10 L/min, check-values 2b, derived)
    expect(estimateInspiratoryDemand(20).peakFlowLPerMin).toBeLessThan(41.6);
  });

  it.each([31, 40, 60])('puts the peak of a distressed adult breathing %i/min within 60-120 L/min', (rr) => {
    // check-values 2b: peak inspiratory flow in distressed adults 60-120 L/min (common practice, from memory)
    const { peakFlowLPerMin } = estimateInspiratoryDemand(rr);
    expect(peakFlowLPerMin).toBeGreaterThanOrEqual(DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN.low);
    expect(peakFlowLPerMin).toBeLessThanOrEqual(DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN.high);
    expect(DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN).toStrictEqual({ low: 60, high: 120 });
  });

  it('calls a rate above 30/min tachypnoea', () => {
    // BTS 2017, Table 4: Venturi allowance for respiratory rate > 30/min
    expect(TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN).toBe(30);
    expect(estimateInspiratoryDemand(30).tachypnoea).toBe(false);
    expect(estimateInspiratoryDemand(31).tachypnoea).toBe(true);
  });

  it('varies only the tidal volume, 0.4-0.6 L, when the rate is known', () => {
    // from memory: 6-8 mL/kg for a 60-75 kg adult
    const demand = estimateInspiratoryDemand(24);
    expect(demand.respRateKnown).toBe(true);
    expect(demand.lowDemand).toStrictEqual({ tidalVolumeL: 0.4, respRatePerMin: 24, inspiratoryFraction: 1 / 3 });
    expect(demand.highDemand).toStrictEqual({ tidalVolumeL: 0.6, respRatePerMin: 24, inspiratoryFraction: 1 / 3 });
  });

  it('uses the resting rate but spans 12-30/min when the rate is not known', () => {
    // common practice: adult resting rate from 12/min; BTS 2017 Table 4 tachypnoea threshold 30/min
    const unknown = estimateInspiratoryDemand(undefined);
    const known = estimateInspiratoryDemand(20);
    expect(unknown.respRateKnown).toBe(false);
    expect(unknown.central).toStrictEqual(known.central);
    expect(unknown.lowDemand.respRatePerMin).toBe(12);
    expect(unknown.highDemand.respRatePerMin).toBe(30);
    expect(meanInspiratoryFlowLPerMin(unknown.lowDemand)).toBeLessThan(meanInspiratoryFlowLPerMin(known.lowDemand));
    expect(meanInspiratoryFlowLPerMin(unknown.highDemand)).toBeGreaterThan(
      meanInspiratoryFlowLPerMin(known.highDemand),
    );
  });

  it('says in its notes what it assumed and when breathing is fast', () => {
    expect(demandNotes(estimateInspiratoryDemand(18))).toStrictEqual([]);
    const [assumed] = demandNotes(estimateInspiratoryDemand(undefined));
    expect(assumed).toContain('20/min');
    expect(assumed).toContain('12-30/min');
    const [fast] = demandNotes(estimateInspiratoryDemand(36));
    expect(fast).toContain('60-120 L/min');
  });

  describe('edge cases', () => {
    it.each([0, -4, Number.NaN, Number.POSITIVE_INFINITY])('treats a rate of %d as a programmer error', (rr) => {
      expect(() => estimateInspiratoryDemand(rr)).toThrow(RangeError);
    });

    it('scales the mean flow in proportion to the rate', () => {
      // mass balance: V̇insp = VT × RR / (Ti/Ttot), so doubling the rate doubles it
      expectWithin(estimateInspiratoryDemand(40).meanFlowLPerMin, 60, 1e-9);
    });
  });
});
