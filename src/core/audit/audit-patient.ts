import { buildAssessment } from '../assessment/build-assessment.js';
import { matchUnit, policyForEncounter, policyForUnit } from '../assessment/unit-targets.js';
import type { Assessment } from '../assessment/types.js';
import type { Policy } from '../policy.js';
import { expectsTarget } from '../rules/support/order-purpose.js';
import { timeInRange } from '../titration/time-in-range.js';
import type { OxygenOrder, SaturationRange } from '../types.js';
import { factsAt } from './facts-at.js';
import {
  auditedOrder,
  authoredMs,
  firstOnOxygenMs,
  orderChangesBetween,
  orderInForce,
  oxygenCourse,
  type OxygenCourse,
} from './oxygen-course.js';
import type { AuditPatient, AuditPeriod, AuditTime, PatientAudit } from './types.js';

/**
 * One patient's part in the ward audit (definitions in docs/policy.md, "Audit your wards"). Pure.
 *
 * - On oxygen: on oxygen (oxygen-course.ts) at any moment of the patient's stay inside the period.
 * - Has an order: an order giving oxygen was in force at some moment of it (the newest is audited).
 * - Target range: the audited order states a two-sided SpO2 range (counted over orders that need one:
 *   comfort oxygen has no SpO2 target, BTS 2017).
 * - Range for risk: the ordered range equals the range the engine selects for this patient from the
 *   data recorded by the order's authored time (buildAssessment: hypercapnic risk from the policy's
 *   conditions and gases, BTS 2017 Tables 1-4).
 * - At risk on the standard range: the engine selects the at-risk range (`basis` hypercapnic-risk)
 *   and the order states the policy's standard range.
 * - Time: from the first moment on oxygen to the end of the stay in the period, split at each order
 *   written or ended; each stretch is judged by the titration review's weighting (timeInRange) against
 *   the range the engine titrates to at its start (the ordered range, or the applicable one when none
 *   is ordered or the ordered one is on the unsafe side). A reading does not stand across a new order.
 */

const MS_PER_MIN = 60_000;
const WARD_NOT_RECORDED = 'Ward not recorded';

export const NO_TIME: AuditTime = {
  inRangeMinutes: 0,
  aboveOnOxygenMinutes: 0,
  aboveOnAirMinutes: 0,
  belowMinutes: 0,
  observedMinutes: 0,
  unobservedMinutes: 0,
  notJudgedMinutes: 0,
};

export function addTime(a: AuditTime, b: AuditTime): AuditTime {
  return {
    inRangeMinutes: a.inRangeMinutes + b.inRangeMinutes,
    aboveOnOxygenMinutes: a.aboveOnOxygenMinutes + b.aboveOnOxygenMinutes,
    aboveOnAirMinutes: a.aboveOnAirMinutes + b.aboveOnAirMinutes,
    belowMinutes: a.belowMinutes + b.belowMinutes,
    observedMinutes: a.observedMinutes + b.observedMinutes,
    unobservedMinutes: a.unobservedMinutes + b.unobservedMinutes,
    notJudgedMinutes: a.notJudgedMinutes + b.notJudgedMinutes,
  };
}

function sameRange(a: SaturationRange, b: SaturationRange): boolean {
  return a.lowPercent === b.lowPercent && a.highPercent === b.highPercent;
}

// The ward's unit override (policy `units`) applies as on a card: the engine resolves the unit from
// the encounter's location first (engine.ts), so the audit must too, or an ICU on its own range would
// be judged against the wards' range.
function assessAt(patient: AuditPatient, order: OxygenOrder | undefined, ms: number, policy: Policy): Assessment {
  const now = new Date(ms);
  const facts = factsAt(patient, order, now, policy);
  const { policy: unitPolicy, unit } = policyForEncounter(policy, facts);
  return buildAssessment(facts, unitPolicy, { now, order, unit });
}

/** The patient's stay inside the period, in ms; undefined when they do not overlap. */
export function stayInPeriod(patient: AuditPatient, period: AuditPeriod): { startMs: number; endMs: number } | undefined {
  const admitted = patient.admittedAt === undefined ? Number.NaN : Date.parse(patient.admittedAt);
  const discharged = patient.dischargedAt === undefined ? Number.NaN : Date.parse(patient.dischargedAt);
  const startMs = Math.max(Date.parse(period.from), Number.isNaN(admitted) ? Number.NEGATIVE_INFINITY : admitted);
  const endMs = Math.min(Date.parse(period.to), Number.isNaN(discharged) ? Number.POSITIVE_INFINITY : discharged);
  return Number.isFinite(startMs) && Number.isFinite(endMs) && startMs <= endMs ? { startMs, endMs } : undefined;
}

function timeOnRange(
  patient: AuditPatient,
  course: OxygenCourse,
  fromMs: number,
  toMs: number,
  policy: Policy,
): AuditTime {
  const bounds = [fromMs, ...orderChangesBetween(patient, fromMs, toMs), toMs];
  let total = NO_TIME;
  for (let i = 0; i + 1 < bounds.length; i += 1) {
    const startMs = bounds[i] ?? fromMs;
    const endMs = bounds[i + 1] ?? toMs;
    const minutes = (endMs - startMs) / MS_PER_MIN;
    const order = orderInForce(patient, startMs)?.order;
    // Comfort oxygen is not titrated to a saturation (BTS 2017), so its SpO2 is not judged.
    const titrated = order === undefined || expectsTarget(order);
    const target = titrated ? assessAt(patient, order, startMs, policy).titrationTarget : undefined;
    if (target === undefined) {
      total = addTime(total, { ...NO_TIME, notJudgedMinutes: minutes });
      continue;
    }
    const split = timeInRange({
      readings: patient.spo2Percent,
      range: target.range,
      now: new Date(endMs),
      lookbackMinutes: minutes,
      maxHoldMinutes: policy.titrationReview.maxReadingHoldMinutes,
      oxygenSteps: course.steps,
      onOxygenAtStart: course.onOxygenAtStart,
    });
    total = addTime(total, {
      inRangeMinutes: split.inRangeMinutes,
      aboveOnOxygenMinutes: split.aboveOnOxygenMinutes,
      aboveOnAirMinutes: split.aboveOnAirMinutes,
      belowMinutes: split.belowMinutes,
      observedMinutes: split.observedMinutes,
      unobservedMinutes: split.unobservedMinutes,
      notJudgedMinutes: 0,
    });
  }
  return total;
}

export function auditPatient(patient: AuditPatient, period: AuditPeriod, policy: Policy): PatientAudit {
  const ward = patient.ward ?? WARD_NOT_RECORDED;
  const none: PatientAudit = {
    key: patient.key,
    ward,
    underMinimumAge: false,
    onOxygen: false,
    hasOrder: false,
    orderNeedsTarget: false,
    hasTargetRange: false,
    rangeForRisk: undefined,
    atRiskRangeCalledFor: false,
    atRiskOnStandardRange: false,
    orderedRange: undefined,
    advisedRange: undefined,
    time: NO_TIME,
  };
  // The guidelines' ranges are for adults; children follow local paediatric policy (policy.population).
  if (patient.ageYears !== undefined && patient.ageYears < policy.population.minimumAgeYears) {
    return { ...none, underMinimumAge: true };
  }
  const stay = stayInPeriod(patient, period);
  const course = oxygenCourse(patient);
  const firstOn = stay === undefined ? undefined : firstOnOxygenMs(course, stay.startMs, stay.endMs);
  if (stay === undefined || firstOn === undefined) {
    return none;
  }
  const audited = auditedOrder(patient, stay.startMs, stay.endMs)?.order;
  const authored = audited === undefined ? firstOn : authoredMs(audited);
  const assessment = assessAt(patient, audited, Number.isFinite(authored) ? authored : stay.startMs, policy);
  const target = assessment.target;
  const ordered = audited?.target === undefined ? undefined : { lowPercent: audited.target.lowPercent, highPercent: audited.target.highPercent };
  const atRiskRangeCalledFor = target.kind === 'range' && target.basis === 'hypercapnic-risk';
  // The standard range of the patient's unit (its override, else the policy's), as the assessment read it.
  const standard = policyForUnit(policy, matchUnit(policy.units, { name: patient.ward, ids: [] })).targets.standard;
  return {
    ...none,
    onOxygen: true,
    hasOrder: audited !== undefined,
    orderNeedsTarget: audited !== undefined && expectsTarget(audited),
    hasTargetRange: ordered !== undefined,
    rangeForRisk:
      ordered === undefined || target.kind !== 'range' ? undefined : assessment.targetComparison.kind === 'matches',
    atRiskRangeCalledFor,
    atRiskOnStandardRange: atRiskRangeCalledFor && ordered !== undefined && sameRange(ordered, standard),
    orderedRange: ordered,
    advisedRange: target.kind === 'range' ? target.range : undefined,
    time: timeOnRange(patient, course, firstOn, stay.endMs, policy),
  };
}

