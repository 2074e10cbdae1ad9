/**
 * The patient's inspiratory flow, which every delivery model compares with the device's gas flow.
 *
 * Mean inspiratory flow = V̇E × Ttot/Ti = VT × RR / (Ti/Ttot) (mass balance). VT 0.5 L, RR 20/min and
 * Ti/Ttot 1/3 give V̇E 10 L/min and a mean inspiratory flow of 30 L/min (check-values 2b, derived).
 * Peak inspiratory flow = 4/3 × mean, from a trapezoidal flow profile (see
 * {@link INSPIRATORY_FLOW_RAMP_FRACTION}).
 */

/** Resting adult tidal volume, L (check-values 2b worked example; common practice). */
export const RESTING_TIDAL_VOLUME_L = 0.5;

/** Ti/Ttot at rest, i.e. an I:E ratio of 1:2 (check-values 2b; common practice). */
export const RESTING_INSPIRATORY_FRACTION = 1 / 3;

/** Respiratory rate assumed when none is known: the worked examples' 20/min (check-values 2b). */
export const DEFAULT_RESP_RATE_PER_MIN = 20;

/**
 * Tidal volumes bounding the FiO2 range: about 6–8 mL/kg for a 60–75 kg adult (from memory).
 * A smaller breath dilutes the device's oxygen less, so the low volume gives the high FiO2.
 */
export const TIDAL_VOLUME_BAND_L = { low: 0.4, high: 0.6 } as const;

/**
 * Respiratory rates bounding the range when the rate is not known: the usual adult resting range
 * starts at 12/min (common practice); the top is the BTS 2017 Table 4 tachypnoea threshold, so an
 * unrecorded fast rate up to 30/min is covered.
 */
export const UNKNOWN_RESP_RATE_BAND_PER_MIN = { low: 12, high: 30 } as const;

/**
 * Share of inspiration over which flow rises to its peak, and again falls from it: a trapezoidal
 * profile, flat for the middle half of the breath. This is this service's calibration, not a
 * published value. It gives peak = mean / (1 − ramp) = 4/3 × mean, a resting peak of 40 L/min at
 * 20/min: within one SD of the 34 ± 9 L/min measured in hypoxaemic adults (Li et al., Ann Intensive
 * Care 2021) yet above its mean, and below the 41.6-52.7 L/min total flows of the 24-40 % Venturi
 * settings, which Jones 1984 measured delivering their setting at rest. A half-sine profile
 * (peak π/2 × mean, 47 L/min) exceeds both measurements and would call those settings inadequate.
 */
export const INSPIRATORY_FLOW_RAMP_FRACTION = 0.25;

/** Peak-to-mean ratio of the trapezoidal profile, 1/(1 − ramp) = 4/3. */
export const PEAK_TO_MEAN_INSPIRATORY_FLOW = 1 / (1 - INSPIRATORY_FLOW_RAMP_FRACTION);

/** Peak inspiratory flow in a distressed adult (check-values 2b; common practice, from memory). */
export const DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN = { low: 60, high: 120 } as const;

/** Breathing faster than this is tachypnoea for device purposes (BTS 2017 Table 4, Venturi). */
export const TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN = 30;

export interface BreathingPattern {
  readonly tidalVolumeL: number;
  readonly respRatePerMin: number;
  /** Ti/Ttot. */
  readonly inspiratoryFraction: number;
}

export interface InspiratoryDemand {
  readonly respRateKnown: boolean;
  /** Respiratory rate above {@link TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN}. */
  readonly tachypnoea: boolean;
  /** The pattern the estimate uses. */
  readonly central: BreathingPattern;
  /** The pattern demanding least flow (small, slow breaths): bounds the FiO2 from above. */
  readonly lowDemand: BreathingPattern;
  /** The pattern demanding most flow (large, fast breaths): bounds the FiO2 from below. */
  readonly highDemand: BreathingPattern;
  readonly meanFlowLPerMin: number;
  readonly peakFlowLPerMin: number;
}

export function minuteVentilationLPerMin(pattern: BreathingPattern): number {
  return pattern.tidalVolumeL * pattern.respRatePerMin;
}

/** Mean flow during inspiration, L/min: V̇E × Ttot/Ti. */
export function meanInspiratoryFlowLPerMin(pattern: BreathingPattern): number {
  return minuteVentilationLPerMin(pattern) / pattern.inspiratoryFraction;
}

/** Peak inspiratory flow, L/min, for the trapezoidal profile: 4/3 × mean. */
export function peakInspiratoryFlowLPerMin(pattern: BreathingPattern): number {
  return meanInspiratoryFlowLPerMin(pattern) * PEAK_TO_MEAN_INSPIRATORY_FLOW;
}

export function inspiratoryTimeS(pattern: BreathingPattern): number {
  return (60 / pattern.respRatePerMin) * pattern.inspiratoryFraction;
}

export function expiratoryTimeS(pattern: BreathingPattern): number {
  return (60 / pattern.respRatePerMin) * (1 - pattern.inspiratoryFraction);
}

/**
 * The central, low-demand and high-demand breathing patterns for a respiratory rate (or none).
 * With a known rate only the tidal volume varies; without one the rate spans
 * {@link UNKNOWN_RESP_RATE_BAND_PER_MIN} as well, which widens every FiO2 range built on it.
 * The caller validates the rate; a non-positive rate is a programmer error.
 */
export function estimateInspiratoryDemand(respRatePerMin: number | undefined): InspiratoryDemand {
  if (respRatePerMin !== undefined && !(Number.isFinite(respRatePerMin) && respRatePerMin > 0)) {
    throw new RangeError(`respiratory rate must be a positive number, got ${respRatePerMin}`);
  }
  const known = respRatePerMin !== undefined;
  const rate = respRatePerMin ?? DEFAULT_RESP_RATE_PER_MIN;
  const pattern = (tidalVolumeL: number, rr: number): BreathingPattern => ({
    tidalVolumeL,
    respRatePerMin: rr,
    inspiratoryFraction: RESTING_INSPIRATORY_FRACTION,
  });
  const central = pattern(RESTING_TIDAL_VOLUME_L, rate);
  return {
    respRateKnown: known,
    tachypnoea: rate > TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN,
    central,
    lowDemand: pattern(TIDAL_VOLUME_BAND_L.low, known ? rate : UNKNOWN_RESP_RATE_BAND_PER_MIN.low),
    highDemand: pattern(TIDAL_VOLUME_BAND_L.high, known ? rate : UNKNOWN_RESP_RATE_BAND_PER_MIN.high),
    meanFlowLPerMin: meanInspiratoryFlowLPerMin(central),
    peakFlowLPerMin: peakInspiratoryFlowLPerMin(central),
  };
}

// The two notes read only constants, so each is written once rather than on every estimate.
const ASSUMED_PATTERN_NOTE =
  `Respiratory rate not given: a resting pattern of ${DEFAULT_RESP_RATE_PER_MIN}/min and ` +
  `${RESTING_TIDAL_VOLUME_L} L breaths was assumed and the range widened to cover ` +
  `${UNKNOWN_RESP_RATE_BAND_PER_MIN.low}-${UNKNOWN_RESP_RATE_BAND_PER_MIN.high}/min (common practice).`;
const FAST_BREATHING_NOTE =
  `Breathing faster than ${TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN}/min: a distressed adult may draw ` +
  `${DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN.low}-${DISTRESSED_PEAK_INSPIRATORY_FLOW_L_PER_MIN.high} ` +
  'L/min at peak, more than most oxygen devices supply, so less oxygen reaches the lungs (common practice).';

/** The notes every model adds about the breathing pattern it assumed. */
export function demandNotes(demand: InspiratoryDemand): readonly string[] {
  const notes: string[] = [];
  if (!demand.respRateKnown) {
    notes.push(ASSUMED_PATTERN_NOTE);
  }
  if (demand.tachypnoea) {
    notes.push(FAST_BREATHING_NOTE);
  }
  return notes;
}
