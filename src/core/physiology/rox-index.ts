import { assertInRange, roundForThreshold } from './valid-ranges.js';

/**
 * ROX index: (SpO2 % / FiO2) / respiratory rate (Roca et al., J Crit Care 35:200, 2016, and
 * AJRCCM 199:1368, 2019; policy key `roca-2019`). Check value: SpO2 92 %, FiO2 0.5, RR 30 gives
 * 6.13. Validated only in patients on high-flow nasal oxygen.
 *
 * @param spo2Percent - 20–100 %.
 * @param fio2Fraction - 0.20–1.
 * @param respRatePerMin - 1–80 /min.
 * @throws RangeError outside those ranges.
 */
export function roxIndex(spo2Percent: number, fio2Fraction: number, respRatePerMin: number): number {
  assertInRange('spo2Percent', spo2Percent);
  assertInRange('fio2Fraction', fio2Fraction);
  assertInRange('respRatePerMin', respRatePerMin);
  return spo2Percent / fio2Fraction / respRatePerMin;
}

/** Roca 2019: ROX ≥ 4.88 at 2, 6 or 12 h was linked to a lower risk of intubation. */
export const ROX_LOW_RISK_AT_LEAST = 4.88;

/** Roca 2019: ROX below these at 2, 6 and 12 h predicted high-flow failure. */
export const ROX_HIGH_RISK_BELOW = { at2h: 2.85, at6h: 3.47, at12h: 3.85 } as const;

/** The time points at which Roca 2019 validated a failure threshold, in hours of high flow. */
export type RoxTimePoint = 2 | 6 | 12;

/**
 * The Roca 2019 time point whose failure threshold applies after `hoursOnHighFlow`: the last one
 * reached (2 h up to 6 h, 6 h up to 12 h, 12 h from then on, carried forward as our cautious choice);
 * undefined before 2 h, where nothing was validated.
 */
export function roxTimePoint(hoursOnHighFlow: number): RoxTimePoint | undefined {
  return hoursOnHighFlow < 2 ? undefined : hoursOnHighFlow < 6 ? 2 : hoursOnHighFlow < 12 ? 6 : 12;
}

/** Roca 2019: the ROX below which high flow was predicted to fail, at a time point. */
export function roxFailureBelow(timePoint: RoxTimePoint): number {
  return timePoint === 2 ? ROX_HIGH_RISK_BELOW.at2h : timePoint === 6 ? ROX_HIGH_RISK_BELOW.at6h : ROX_HIGH_RISK_BELOW.at12h;
}

/**
 * Reads a ROX index against the Roca 2019 thresholds of one time point: 'low-risk' at ≥ 4.88,
 * 'high-risk' below that time point's failure threshold, otherwise 'indeterminate'. Used directly
 * when the start of high flow is unknown and a time point has to be chosen.
 *
 * @param rox - 0.1–100.
 * @throws RangeError outside that range.
 */
export function interpretRoxAt(rox: number, timePoint: RoxTimePoint): 'low-risk' | 'high-risk' | 'indeterminate' {
  assertInRange('roxIndex', rox);
  const value = roundForThreshold(rox);
  if (value >= ROX_LOW_RISK_AT_LEAST) {
    return 'low-risk';
  }
  return value < roxFailureBelow(timePoint) ? 'high-risk' : 'indeterminate';
}

/**
 * Reads a ROX index against the Roca 2019 thresholds: 'low-risk' at ≥ 4.88; 'high-risk' below
 * 2.85 / 3.47 / 3.85 at 2 / 6 / 12 h; otherwise 'indeterminate'.
 *
 * Roca validated the thresholds at 2, 6 and 12 h. Between those times the threshold of the last
 * time point reached applies; beyond 12 h the 12-h threshold is carried forward (our choice, made
 * to stay cautious). Before 2 h nothing was validated, so the answer is 'indeterminate'. The index
 * predicts outcome; it does not decide intubation, which stays with the treating team.
 *
 * @param rox - 0.1–100.
 * @param hoursOnHighFlow - 0–720 h since high-flow oxygen started.
 * @throws RangeError outside those ranges.
 */
export function interpretRox(
  rox: number,
  hoursOnHighFlow: number,
): 'low-risk' | 'high-risk' | 'indeterminate' {
  assertInRange('roxIndex', rox);
  assertInRange('hoursOnHighFlow', hoursOnHighFlow);
  const timePoint = roxTimePoint(hoursOnHighFlow);
  return timePoint === undefined ? 'indeterminate' : interpretRoxAt(rox, timePoint);
}
