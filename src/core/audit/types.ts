import type { BloodGas, ConditionFact, Measured, OxygenOrder, SaturationRange } from '../types.js';

/**
 * The plain per-patient data a ward oxygen audit works on, read from a FHIR Bulk Data export by the
 * shell (src/audit) and nothing else: the core never sees FHIR. Times are ISO 8601.
 */

/** One oxygen order as recorded, with when it was given and, when the record says, when it ended. */
export interface AuditOrder {
  /** Read as a live order, so a completed order still says what it prescribed. */
  readonly order: OxygenOrder;
  /** The status on record (`active`, `completed`, `stopped`, ...). */
  readonly recordedStatus: string | undefined;
  /** When the order ended, if the record says (a period end); otherwise it runs until replaced. */
  readonly endedAt: string | undefined;
}

export interface AuditPatient {
  /** An opaque key for grouping and for tests; never printed in a report. */
  readonly key: string;
  /** The ward of the patient's stay in the audit period; undefined when the export does not say. */
  readonly ward: string | undefined;
  readonly admittedAt: string | undefined;
  readonly dischargedAt: string | undefined;
  readonly ageYears: number | undefined;
  readonly bmiKgPerM2: number | undefined;
  readonly orders: readonly AuditOrder[];
  /** Every reading of the stay, any order. */
  readonly spo2Percent: readonly Measured[];
  readonly fio2Fraction: readonly Measured[];
  readonly o2FlowLPerMin: readonly Measured[];
  readonly bloodGases: readonly BloodGas[];
  readonly conditions: readonly ConditionFact[];
}

/** The audit period, inclusive of both ends. */
export interface AuditPeriod {
  readonly from: string;
  readonly to: string;
}

/** A count with its denominator; shown as "7 of 9 (78 %)". */
export interface CountOf {
  readonly count: number;
  readonly of: number;
}

/**
 * SpO2 time on the range that applied, from the first time on oxygen in the period to its end
 * (titration review weighting: each reading stands until the next, capped). Minutes.
 */
export interface AuditTime {
  readonly inRangeMinutes: number;
  readonly aboveOnOxygenMinutes: number;
  readonly aboveOnAirMinutes: number;
  readonly belowMinutes: number;
  /** in + above on oxygen + above on air + below. */
  readonly observedMinutes: number;
  /** No reading stood for the patient (before the first reading, gaps past the hold cap). */
  readonly unobservedMinutes: number;
  /** Time with no SpO2 range to judge against (comfort oxygen, carbon monoxide, pneumothorax). */
  readonly notJudgedMinutes: number;
}

/** What the audit found for one patient; kept out of reports (figures only), used by tests. */
export interface PatientAudit {
  readonly key: string;
  readonly ward: string;
  /** Below `population.minimumAgeYears`: adult targets do not apply, so left out of every figure. */
  readonly underMinimumAge: boolean;
  readonly onOxygen: boolean;
  readonly hasOrder: boolean;
  /** The audited order titrates to a target (not comfort oxygen or an order saying it has none). */
  readonly orderNeedsTarget: boolean;
  readonly hasTargetRange: boolean;
  /** Whether the ordered range is the one the patient's risk calls for; undefined when not judged. */
  readonly rangeForRisk: boolean | undefined;
  /** Whether the patient's risk calls for the at-risk range (BTS 2017 Table 4). */
  readonly atRiskRangeCalledFor: boolean;
  /** At-risk range called for and the standard range ordered. */
  readonly atRiskOnStandardRange: boolean;
  readonly orderedRange: SaturationRange | undefined;
  readonly advisedRange: SaturationRange | undefined;
  readonly time: AuditTime;
}

export interface WardFigures {
  readonly ward: string;
  /** Patients in the export with data in the period (adults and children). */
  readonly patients: number;
  readonly underMinimumAge: number;
  readonly onOxygen: number;
  /** Of patients on oxygen: with an oxygen order. */
  readonly withOrder: CountOf;
  /** Of patients with an order that needs a target: with a target range on it. */
  readonly withTargetRange: CountOf;
  /** Of patients with an ordered range where an SpO2 range applies: the range their risk calls for. */
  readonly withRangeForRisk: CountOf;
  /** Of patients whose risk calls for the at-risk range and who have an ordered range: on the standard range. */
  readonly atRiskOnStandardRange: CountOf;
  readonly time: AuditTime;
}

export interface AuditFigures {
  readonly period: AuditPeriod;
  readonly wards: readonly WardFigures[];
  readonly overall: WardFigures;
}
