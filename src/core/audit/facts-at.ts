import type { Policy } from '../policy.js';
import type { BloodGas, Facts, Measured, OxygenOrder } from '../types.js';
import type { AuditPatient } from './types.js';
import { sortByTime } from '../time/sort-by-time.js';

/**
 * The Facts the engine would have had about an audited patient at one moment: only what was recorded
 * by then, current values inside the policy's freshness windows, older gases inside
 * `freshness.previousHypercapniaDays` kept as history, as the FHIR reader splits them. Built so the
 * audit decides hypercapnic risk and the applicable range with the engine's own functions
 * (buildAssessment), never a second copy of those rules. Pure.
 */

const MS_PER_MIN = 60_000;

function ageMinutes(at: string, nowMs: number): number | undefined {
  const ms = Date.parse(at);
  return Number.isNaN(ms) ? undefined : (nowMs - ms) / MS_PER_MIN;
}

/** Items dated at or before now and at most `windowMinutes` old, newest first. */
function within<T extends { readonly at: string }>(items: readonly T[], nowMs: number, windowMinutes: number): T[] {
  const kept = items.filter((item) => {
    const age = ageMinutes(item.at, nowMs);
    return age !== undefined && age >= 0 && age <= windowMinutes;
  });
  return sortByTime(kept, (item) => item.at, 'newest-first');
}

export function factsAt(patient: AuditPatient, order: OxygenOrder | undefined, at: Date, policy: Policy): Facts {
  const nowMs = at.getTime();
  const vitals = policy.freshness.vitalSignsMinutes;
  const trend = Math.max(vitals, policy.thresholds.oxygenNeedTrendMinutes, policy.titrationReview.lookbackHours * 60);
  const gasMinutes = policy.freshness.bloodGasMinutes;
  const historyMinutes = policy.freshness.previousHypercapniaDays * 24 * 60;
  const current: BloodGas[] = within(patient.bloodGases, nowMs, gasMinutes);
  const historic = within(patient.bloodGases, nowMs, historyMinutes).filter((g) => !current.includes(g));
  const recent = (items: readonly Measured[]): Measured[] => within(items, nowMs, vitals);
  return {
    patient: { ageYears: patient.ageYears, bmiKgPerM2: patient.bmiKgPerM2 },
    orders: order === undefined ? [] : [{ ...order, isSubject: true }],
    activeOrders: [],
    spo2Percent: recent(patient.spo2Percent),
    fio2Fraction: recent(patient.fio2Fraction),
    o2FlowLPerMin: recent(patient.o2FlowLPerMin),
    respRatePerMin: [],
    haemoglobinGPerDL: [],
    trendReadings: {
      spo2Percent: within(patient.spo2Percent, nowMs, trend),
      fio2Fraction: within(patient.fio2Fraction, nowMs, trend),
      o2FlowLPerMin: within(patient.o2FlowLPerMin, nowMs, trend),
    },
    bloodGases: current,
    historicBloodGases: historic,
    conditions: patient.conditions,
    setAside: [],
    missingData: [],
    encounterUnit: patient.ward,
  };
}
