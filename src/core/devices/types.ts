import type { DeviceKind, Outcome } from '../types.js';

/**
 * What an order (or a chart entry) says about the device's settings. Every field is optional: a model
 * answers `unknown` naming the fields it needed and did not get.
 */
export interface DeliveryInput {
  /** O2 flow from the wall/flowmeter in L/min (or the total gas flow of high-flow nasal cannula). */
  readonly flowLPerMin?: number;
  /** Venturi setting, or the blender FiO2 of high-flow or NIV, as a fraction 0.21–1. */
  readonly setFio2Fraction?: number;
  /** When known, drives the patient's inspiratory demand (breaths/min). */
  readonly respRatePerMin?: number;
}

/** An FiO2 estimate with the spread it may plausibly take. All fractions, low ≤ estimate ≤ high. */
export interface Fio2Range {
  readonly estimate: number;
  readonly low: number;
  readonly high: number;
}

export interface DeliveryEstimate {
  readonly fio2: Fio2Range;
  /** True only while the device's gas flow meets the patient's estimated inspiratory demand. */
  readonly fixedPerformance: boolean;
  /** Venturi/HFNC total gas flow (L/min); undefined for devices where it has no meaning. */
  readonly totalFlowLPerMin: number | undefined;
  /** The patient's estimated peak inspiratory flow (L/min) at the central breathing pattern used. */
  readonly peakInspiratoryFlowLPerMin: number | undefined;
  /** Venturi air:O2 entrainment ratio. */
  readonly entrainmentRatio: number | undefined;
  /** Venturi minimum O2 flow (L/min) for the setting. */
  readonly minimumFlowLPerMin: number | undefined;
  /** Short plain sentences, each naming its basis in words. */
  readonly notes: readonly string[];
  /** Keys into `policy.references`, e.g. 'bts-2017', 'device-mixing'. */
  readonly sourceKeys: readonly string[];
}

export interface DeviceModel {
  readonly kind: DeviceKind;
  /** Plain English, e.g. "Nasal cannula". */
  readonly label: string;
  /** The usual adult flow range; flows outside it still get an estimate, with a note. */
  readonly flowRangeLPerMin: { readonly min: number; readonly max: number };
  readonly estimate: (input: DeliveryInput) => Outcome<DeliveryEstimate>;
}
