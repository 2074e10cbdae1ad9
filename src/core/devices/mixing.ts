import { INSPIRATORY_FLOW_RAMP_FRACTION } from './inspiratory-demand.js';
import type { Fio2Range } from './types.js';

/**
 * Mass-balance models of how a device's gas mixes with room air in the patient's breath. Flows are
 * L/min, volumes L, times s, oxygen as fractions. Policy reference key: `device-mixing`.
 */

/** Oxygen fraction of room air (dry air 20.9 %, conventionally 0.21; common practice). */
export const ROOM_AIR_O2_FRACTION = 0.21;

/**
 * Continuous low-flow mixing, no reservoir beyond the mask itself:
 * FiO2 = 0.21 + (F_source − 0.21) × min(1, Q / V̇insp), with V̇insp the mean inspiratory flow.
 * With pure oxygen (F_source 1) this is 0.21 + 0.79 × min(1, Q/V̇insp): Q 6, V̇ 30 → 0.368
 * (check-values 2b, derived from the mass balance). All the source gas that flows during inspiration
 * is inhaled, the rest of the breath is room air.
 */
export function mixingFio2(
  sourceFlowLPerMin: number,
  meanInspiratoryFlowLPerMin: number,
  sourceO2Fraction = 1,
): number {
  const share = Math.min(1, sourceFlowLPerMin / meanInspiratoryFlowLPerMin);
  return ROOM_AIR_O2_FRACTION + (sourceO2Fraction - ROOM_AIR_O2_FRACTION) * share;
}

/**
 * Share of a breath that is room air drawn past an open source of steady flow T (Venturi, high-flow
 * cannula) when the patient's flow has peak P and the trapezoidal profile of
 * {@link INSPIRATORY_FLOW_RAMP_FRACTION} r (rising over the first r of inspiration, flat, falling
 * over the last r). Room air enters only while the patient's flow exceeds T; integrating that excess
 * and dividing by the breath, P(1 − r), gives with x = T/P
 * a = (1 − x)(1 − r − r·x)/(1 − r). a = 0 when T ≥ P, a = 1 when T = 0, and for small T the inhaled
 * share of source gas, 1 − a, tends to T/V̇mean, agreeing with {@link mixingFio2}.
 */
export function roomAirShareOfBreath(sourceFlowLPerMin: number, peakInspiratoryFlowLPerMin: number): number {
  if (sourceFlowLPerMin >= peakInspiratoryFlowLPerMin) {
    return 0;
  }
  if (sourceFlowLPerMin <= 0) {
    return 1;
  }
  const r = INSPIRATORY_FLOW_RAMP_FRACTION;
  const x = sourceFlowLPerMin / peakInspiratoryFlowLPerMin;
  return ((1 - x) * (1 - r - r * x)) / (1 - r);
}

/** FiO2 when an open source at F_source and flow T meets a breath of peak P. */
export function openSourceFio2(
  sourceO2Fraction: number,
  sourceFlowLPerMin: number,
  peakInspiratoryFlowLPerMin: number,
): number {
  const air = roomAirShareOfBreath(sourceFlowLPerMin, peakInspiratoryFlowLPerMin);
  return sourceO2Fraction * (1 - air) + ROOM_AIR_O2_FRACTION * air;
}

export interface AnatomicReservoirInput {
  readonly o2FlowLPerMin: number;
  readonly tidalVolumeL: number;
  readonly inspiratoryTimeS: number;
  /** How long before inspiration the cannula's oxygen collects in the reservoir undisturbed. */
  readonly reservoirFillTimeS: number;
  /** Nose, nasopharynx and oropharynx: 50 mL (Shapiro; check-values 2b, V2/from memory). */
  readonly reservoirL?: number;
  /** Shapiro's worked example uses 0.20; this service uses 0.21. */
  readonly airO2Fraction?: number;
}

/** Anatomic reservoir volume for the nasal cannula model, L (Shapiro; V2, from memory). */
export const ANATOMIC_RESERVOIR_L = 0.05;

/**
 * Nasal cannula model with an anatomic reservoir (Shapiro et al., Clinical Application of Blood
 * Gases): oxygen collects in the reservoir before the breath, flows during inspiration, and room air
 * makes up the rest of the tidal volume.
 * FiO2 = [R + Q·Ti + (VT − R − Q·Ti) × F_air] / VT, with R = min(reservoir, Q × fill time).
 * Worked example: VT 0.5 L, Ti 1 s, 6 L/min, reservoir full → 0.44 with F_air 0.20, 0.447 with 0.21.
 */
export function anatomicReservoirFio2(input: AnatomicReservoirInput): number {
  const flowLPerS = input.o2FlowLPerMin / 60;
  const air = input.airO2Fraction ?? ROOM_AIR_O2_FRACTION;
  const reservoirO2L = Math.min(input.reservoirL ?? ANATOMIC_RESERVOIR_L, flowLPerS * input.reservoirFillTimeS);
  const pureO2L = Math.min(input.tidalVolumeL, reservoirO2L + flowLPerS * input.inspiratoryTimeS);
  return (pureO2L + (input.tidalVolumeL - pureO2L) * air) / input.tidalVolumeL;
}

/** Orders and clamps a range so that 0.21 ≤ low ≤ estimate ≤ high ≤ 1. */
export function fio2Range(estimate: number, low: number, high: number): Fio2Range {
  const clamp = (x: number): number => Math.min(1, Math.max(ROOM_AIR_O2_FRACTION, x));
  const e = clamp(estimate);
  return { estimate: e, low: Math.min(clamp(low), e), high: Math.max(clamp(high), e) };
}

/** The caution every variable-performance estimate carries (check-values pitfall 9). */
export const ESTIMATE_ONLY_NOTE =
  'Estimate only, from a mixing model of device flow against breathing: measured FiO2 varies widely ' +
  'and falls with fast breathing, so flag it if used in P/F or A-a calculations.';
