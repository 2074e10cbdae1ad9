import type { DeviceKind, Outcome } from '../types.js';
import type { VenturiSetting } from './venturi-mask.js';

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
  /**
   * The Venturi valves the hospital stocks, with the minimum flows printed on them (policy
   * `devices`); read first, before the standard settings. Other models ignore it.
   */
  readonly venturiSettings?: readonly VenturiSetting[];
}

/** An FiO2 estimate with the spread it may plausibly take. All fractions, low ≤ estimate ≤ high. */
export interface Fio2Range {
  readonly estimate: number;
  readonly low: number;
  readonly high: number;
}

/**
 * The model that produced a figure, named for the card: high flow and CPAP/NIV are not "low-flow
 * mixing", and a Venturi mask is fixed-performance air entrainment.
 */
export type DeliveryModelKind =
  | 'anatomic-reservoir'
  | 'low-flow-mixing'
  | 'reservoir-bag'
  | 'air-entrainment'
  | 'high-flow-set-fio2'
  | 'ventilator-set-fio2';

export interface DeliveryModel {
  readonly kind: DeliveryModelKind;
  /** Plain words for a computation's formula line, e.g. "low-flow mixing model". */
  readonly name: string;
  /** Key into `policy.references` for the model itself. */
  readonly sourceKey: string;
}

/**
 * The FiO2 published for the device at this flow or setting, widened by its stated tolerance. Every
 * estimate, low and high is kept inside it (docs/basis/devices.md, "Published envelopes").
 */
export interface Fio2Envelope {
  readonly low: number;
  readonly high: number;
  /** Plain words: the published figure used and its source, e.g. "rule of 4 ± 0.05 ...". */
  readonly basis: string;
  readonly sourceKey: string;
}

/**
 * The one point of the FiO2 range that policy thresholds are compared with. `set`: the FiO2 set on a
 * device that delivers its setting (Venturi at or above its minimum flow, high flow, CPAP/NIV with a
 * set FiO2). `low-end`: the low end of the range, for devices whose FiO2 follows the breathing, so a
 * threshold is crossed only when even the least plausible FiO2 reaches it.
 */
export interface ThresholdFio2 {
  readonly fraction: number;
  readonly point: 'set' | 'low-end';
}

export interface DeliveryEstimate {
  /** Estimate and range, all inside {@link envelope}. */
  readonly fio2: Fio2Range;
  /** Rules compare thresholds with `thresholdFio2.fraction`, never with the estimate. */
  readonly thresholdFio2: ThresholdFio2;
  /** `set`: read off the device's setting; `estimated`: worked out from a flow by a model. */
  readonly fio2Source: 'set' | 'estimated';
  readonly model: DeliveryModel;
  readonly envelope: Fio2Envelope;
  /** The respiratory rate the estimate used; undefined when none was known. */
  readonly respRatePerMin: number | undefined;
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
