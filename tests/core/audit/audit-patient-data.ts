import type { AuditOrder, AuditPatient, AuditPeriod } from '../../../src/core/audit/types.js';
import type { Measured, OxygenOrder } from '../../../src/core/types.js';
import { oxygenOrder } from '../facts-builder.js';

/** Invented audit data on one day at Larkspur Bay General Hospital; times are "HH:MM" that day (UTC). */

export const DAY = '2025-03-14';
export const at = (hhmm: string): string => `${DAY}T${hhmm}:00.000Z`;
export const PERIOD: AuditPeriod = { from: at('00:00'), to: at('23:59') };

function reading(value: number, hhmm: string, unit: string): Measured {
  return { value, at: at(hhmm), reported: { value, unit }, reference: undefined };
}

export const spo2At = (percent: number, hhmm: string): Measured => reading(percent, hhmm, '%');
export const flowAt = (lPerMin: number, hhmm: string): Measured => reading(lPerMin, hhmm, 'L/min');
export const fio2At = (fraction: number, hhmm: string): Measured => reading(fraction, hhmm, '1');

/** A titrating nasal-cannula order written at `hhmm`, 94–98 % unless changed. */
export function orderAt(hhmm: string, overrides: Partial<OxygenOrder> = {}, record: Partial<AuditOrder> = {}): AuditOrder {
  return {
    order: oxygenOrder({ status: 'active', isSubject: false, authoredOn: at(hhmm), ...overrides }),
    recordedStatus: 'active',
    endedAt: undefined,
    ...record,
  };
}

export function auditPatientData(overrides: Partial<AuditPatient> = {}): AuditPatient {
  return {
    key: 'Patient/lbgh-audit-test',
    ward: 'Ward 7 (Respiratory)',
    admittedAt: at('08:00'),
    dischargedAt: at('14:00'),
    ageYears: 64,
    bmiKgPerM2: 26,
    orders: [],
    spo2Percent: [],
    fio2Fraction: [],
    o2FlowLPerMin: [],
    bloodGases: [],
    conditions: [],
    ...overrides,
  };
}
