import type { Policy } from '../policy.js';
import { addTime, auditPatient, NO_TIME, stayInPeriod } from './audit-patient.js';
import type { AuditFigures, AuditPatient, AuditPeriod, CountOf, PatientAudit, WardFigures } from './types.js';

/**
 * The ward audit's figures, per ward and overall, from every patient's part (audit-patient.ts). Each
 * patient belongs to one ward, so the overall figures are the sums of the wards' (counts, denominators
 * and minutes alike). Pure.
 */

export const ALL_WARDS = 'All wards';

function countOf(audits: readonly PatientAudit[], inDenominator: (a: PatientAudit) => boolean, counted: (a: PatientAudit) => boolean): CountOf {
  const of = audits.filter(inDenominator);
  return { count: of.filter(counted).length, of: of.length };
}

export function wardFigures(ward: string, audits: readonly PatientAudit[]): WardFigures {
  const onOxygen = audits.filter((a) => a.onOxygen);
  return {
    ward,
    patients: audits.length,
    underMinimumAge: audits.filter((a) => a.underMinimumAge).length,
    onOxygen: onOxygen.length,
    withOrder: countOf(onOxygen, () => true, (a) => a.hasOrder),
    withTargetRange: countOf(onOxygen, (a) => a.orderNeedsTarget, (a) => a.hasTargetRange),
    withRangeForRisk: countOf(onOxygen, (a) => a.rangeForRisk !== undefined, (a) => a.rangeForRisk === true),
    atRiskOnStandardRange: countOf(
      onOxygen,
      (a) => a.atRiskRangeCalledFor && a.hasTargetRange,
      (a) => a.atRiskOnStandardRange,
    ),
    time: onOxygen.reduce((sum, a) => addTime(sum, a.time), NO_TIME),
  };
}

/** Every patient's part, for the patients whose stay overlaps the period. */
export function auditPatients(patients: readonly AuditPatient[], period: AuditPeriod, policy: Policy): PatientAudit[] {
  return patients
    .filter((p) => stayInPeriod(p, period) !== undefined)
    .map((p) => auditPatient(p, period, policy));
}

export function auditWards(patients: readonly AuditPatient[], period: AuditPeriod, policy: Policy): AuditFigures {
  const audits = auditPatients(patients, period, policy);
  const wards = [...new Set(audits.map((a) => a.ward))].sort((a, b) => a.localeCompare(b, 'en'));
  return {
    period,
    wards: wards.map((ward) => wardFigures(ward, audits.filter((a) => a.ward === ward))),
    overall: wardFigures(ALL_WARDS, audits),
  };
}

/**
 * The period an export covers when none is given: from its earliest to its latest recorded time
 * (admissions, discharges, orders, readings, gases). Undefined for an export with no times.
 */
export function exportPeriod(patients: readonly AuditPatient[]): AuditPeriod | undefined {
  let min = Number.POSITIVE_INFINITY;
  let max = Number.NEGATIVE_INFINITY;
  const see = (at: string | undefined): void => {
    const ms = at === undefined ? Number.NaN : Date.parse(at);
    if (!Number.isNaN(ms)) {
      min = Math.min(min, ms);
      max = Math.max(max, ms);
    }
  };
  for (const p of patients) {
    see(p.admittedAt);
    see(p.dischargedAt);
    p.orders.forEach((o) => {
      see(o.order.authoredOn);
      see(o.endedAt);
    });
    [...p.spo2Percent, ...p.fio2Fraction, ...p.o2FlowLPerMin, ...p.bloodGases].forEach((m) => see(m.at));
  }
  return Number.isFinite(min) ? { from: new Date(min).toISOString(), to: new Date(max).toISOString() } : undefined;
}

/** A count as a whole percentage of its denominator; undefined when the denominator is 0. */
export function percentOf(count: number, of: number): number | undefined {
  return of === 0 ? undefined : Math.round((100 * count) / of);
}
