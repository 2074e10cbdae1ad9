import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { auditPatient } from '../../../src/core/audit/audit-patient.js';
import { ALL_WARDS, auditWards, exportPeriod, percentOf } from '../../../src/core/audit/audit-wards.js';
import type { AuditFigures, AuditPatient, WardFigures } from '../../../src/core/audit/types.js';
import { BTS, condition } from '../facts-builder.js';
import { at, auditPatientData, flowAt, orderAt, PERIOD, spo2At } from './audit-patient-data.js';

/**
 * The ward figures over generated invented patients (fixed seed): invariants that hold for any ward
 * mix, checked against each patient's own part rather than against fixed numbers.
 */

const WARDS = ['Ward 3 (Acute Medicine)', 'Ward 7 (Respiratory)', 'Ward 9 (Surgery)'] as const;
const hhmm = (minutes: number): string =>
  `${String(Math.floor(minutes / 60)).padStart(2, '0')}:${String(minutes % 60).padStart(2, '0')}`;

/** A patient admitted 08:00, discharged 20:00, with an order at some time or none, and SpO2 readings. */
const patientArb = fc
  .record({
    index: fc.nat(),
    ward: fc.constantFrom(...WARDS),
    ageYears: fc.integer({ min: 5, max: 95 }),
    copd: fc.boolean(),
    orderMinute: fc.option(fc.integer({ min: 8 * 60, max: 18 * 60 }), { nil: undefined }),
    target: fc.constantFrom('94-98', '88-92', 'none'),
    flowMinute: fc.option(fc.integer({ min: 8 * 60, max: 18 * 60 }), { nil: undefined }),
    readings: fc.array(fc.record({ minute: fc.integer({ min: 8 * 60, max: 20 * 60 - 1 }), value: fc.integer({ min: 80, max: 100 }) }), { maxLength: 8 }),
  })
  .map(
    (g): AuditPatient =>
      auditPatientData({
        key: `Patient/gen-${g.index}`,
        ward: g.ward,
        ageYears: g.ageYears,
        admittedAt: at('08:00'),
        dischargedAt: at('20:00'),
        conditions: g.copd ? [condition('copd')] : [],
        orders:
          g.orderMinute === undefined
            ? []
            : [
                orderAt(hhmm(g.orderMinute), {
                  target:
                    g.target === 'none'
                      ? undefined
                      : { lowPercent: g.target === '94-98' ? 94 : 88, highPercent: g.target === '94-98' ? 98 : 92, readFrom: 'text' },
                }),
              ],
        o2FlowLPerMin: g.flowMinute === undefined ? [] : [flowAt(2, hhmm(g.flowMinute))],
        spo2Percent: g.readings.map((r) => spo2At(r.value, hhmm(r.minute))),
      }),
  );

const patientsArb = fc.array(patientArb, { minLength: 1, maxLength: 12 }).map((ps) => ps.map((p, i) => ({ ...p, key: `Patient/gen-${i}` })));

function sumOfWards(figures: AuditFigures, pick: (w: WardFigures) => number): number {
  return figures.wards.reduce((sum, w) => sum + pick(w), 0);
}

const PICKS: readonly ((w: WardFigures) => number)[] = [
  (w) => w.patients,
  (w) => w.underMinimumAge,
  (w) => w.onOxygen,
  (w) => w.withOrder.count,
  (w) => w.withOrder.of,
  (w) => w.withTargetRange.count,
  (w) => w.withTargetRange.of,
  (w) => w.withRangeForRisk.count,
  (w) => w.withRangeForRisk.of,
  (w) => w.atRiskOnStandardRange.count,
  (w) => w.atRiskOnStandardRange.of,
  (w) => w.time.inRangeMinutes,
  (w) => w.time.aboveOnOxygenMinutes,
  (w) => w.time.aboveOnAirMinutes,
  (w) => w.time.belowMinutes,
  (w) => w.time.unobservedMinutes,
  (w) => w.time.notJudgedMinutes,
];

const RUNS = { seed: 20261204, numRuns: 150 };

describe('auditWards', () => {
  it('gives overall figures equal to the sum of the ward figures', () => {
    fc.assert(
      fc.property(patientsArb, (patients) => {
        const figures = auditWards(patients, PERIOD, BTS);
        expect(figures.overall.ward).toBe(ALL_WARDS);
        for (const pick of PICKS) {
          expect(pick(figures.overall)).toBeCloseTo(sumOfWards(figures, pick), 6);
        }
      }),
      RUNS,
    );
  });

  it('keeps every numerator within its denominator, and each denominator within the one before', () => {
    fc.assert(
      fc.property(patientsArb, (patients) => {
        for (const w of [...auditWards(patients, PERIOD, BTS).wards]) {
          expect(w.onOxygen).toBeLessThanOrEqual(w.patients - w.underMinimumAge);
          expect(w.withOrder.of).toBe(w.onOxygen);
          for (const c of [w.withOrder, w.withTargetRange, w.withRangeForRisk, w.atRiskOnStandardRange]) {
            expect(c.count).toBeLessThanOrEqual(c.of);
          }
          expect(w.withTargetRange.of).toBeLessThanOrEqual(w.withOrder.count);
          expect(w.withRangeForRisk.of).toBeLessThanOrEqual(w.withTargetRange.count);
          expect(w.atRiskOnStandardRange.of).toBeLessThanOrEqual(w.withTargetRange.count);
        }
      }),
      RUNS,
    );
  });

  it('splits each patient\u2019s time from the first moment on oxygen to discharge, to the minute', () => {
    fc.assert(
      fc.property(patientArb, (patient) => {
        const audit = auditPatient(patient, PERIOD, BTS);
        const starts = [...patient.orders.map((o) => o.order.authoredOn), ...patient.o2FlowLPerMin.map((m) => m.at)]
          .filter((s): s is string => s !== undefined)
          .map((s) => Date.parse(s));
        const t = audit.time;
        const parts = t.inRangeMinutes + t.aboveOnOxygenMinutes + t.aboveOnAirMinutes + t.belowMinutes + t.unobservedMinutes + t.notJudgedMinutes;
        if (!audit.onOxygen) {
          expect(parts).toBe(0);
          return;
        }
        const firstOn = Math.min(...starts);
        expect(parts).toBeCloseTo((Date.parse(at('20:00')) - firstOn) / 60_000, 6);
        expect(t.observedMinutes).toBeCloseTo(t.inRangeMinutes + t.aboveOnOxygenMinutes + t.aboveOnAirMinutes + t.belowMinutes, 6);
      }),
      RUNS,
    );
  });

  describe('edge cases', () => {
    it('shows a share with no denominator as no percentage, not 0 %', () => {
      expect(percentOf(0, 0)).toBeUndefined();
      expect(percentOf(2, 3)).toBe(67);
    });

    it('leaves out a patient whose stay does not overlap the period', () => {
      const before = auditPatientData({ admittedAt: '2025-03-12T08:00:00.000Z', dischargedAt: '2025-03-13T08:00:00.000Z', orders: [orderAt('09:00')] });
      expect(auditWards([before], PERIOD, BTS).overall.patients).toBe(0);
    });

    it('takes the period of an export from its earliest to its latest record', () => {
      const p = auditPatientData({ admittedAt: at('07:30'), dischargedAt: undefined, spo2Percent: [spo2At(95, '21:15')] });
      expect(exportPeriod([p])).toEqual({ from: at('07:30'), to: at('21:15') });
      expect(exportPeriod([])).toBeUndefined();
    });
  });
});
