import { describe, expect, it } from 'vitest';
import { buildAssessment, siteBarometricPressure } from '../../../src/core/assessment/build-assessment.js';
import {
  BTS,
  NOW,
  activeOrder,
  bloodGas,
  buildFacts,
  condition,
  fio2,
  minutesAgo,
  oxygenOrder,
  respRate,
  spo2,
  withPolicy,
} from '../facts-builder.js';

describe('siteBarometricPressure', () => {
  it('uses the ICAO Standard Atmosphere at the site altitude', () => {
    // ICAO Doc 7488 (1993): 1500 m -> 634.2 mmHg (check-values 3b, D)
    const result = siteBarometricPressure(withPolicy(BTS, { site: { ...BTS.site, altitudeM: 1500 } }));
    expect(result.model).toBe('isa-1993');
    expect(result.mmHg).toBeCloseTo(634.2, 1);
    expect(result.computation.substituted).toBe('h = 1500 m');
  });

  it('prefers a measured site pressure from the policy', () => {
    const result = siteBarometricPressure(withPolicy(BTS, { site: { ...BTS.site, barometricPressureMmHg: 748 } }));
    expect(result).toMatchObject({ mmHg: 748, model: 'site-value', sourceKey: 'local-policy' });
  });

  describe('edge cases', () => {
    it('uses the West model above 5000 m', () => {
      // West 1996: 5400 m -> 398.9 mmHg (check-values 3b)
      const result = siteBarometricPressure(withPolicy(BTS, { site: { ...BTS.site, altitudeM: 5400 } }));
      expect(result.model).toBe('west-1996');
      expect(result.mmHg).toBeCloseTo(398.9, 0);
    });
  });
});

describe('buildAssessment', () => {
  it('assesses the worked case: kyphoscoliosis, PaCO2 6.7 kPa, 3 L/min nasal cannula at 94-98 %', () => {
    // BTS 2017 Table 4 (88-92 % when at risk); nasal cannula 3 L/min ~ FiO2 0.32 ± 0.05 (check-values 2a, C/V2)
    const facts = buildFacts({
      patient: { ageYears: 64, bmiKgPerM2: 24 },
      orders: [oxygenOrder({ flowLPerMin: 3 })],
      conditions: [condition('chest-wall-deformity')],
      bloodGases: [bloodGas({ ageMinutes: 180, ph: 7.36, paco2Kpa: 6.7, pao2Kpa: 8.1, hco3: 27 })],
      spo2Percent: [spo2(95)],
    });
    const a = buildAssessment(facts, BTS, { now: NOW });
    expect(a.order?.reference).toBe('MedicationRequest/o2-draft-1');
    expect(a.target).toMatchObject({ kind: 'range', range: { lowPercent: 88, highPercent: 92 } });
    expect(a.targetComparison.kind).toBe('above-hypercapnic-range');
    expect(a.hypercapnicRisk.currentHypercapnia).toBe(true);
    expect(a.delivery.kind === 'ok' && Math.abs(a.delivery.value.fio2.estimate - 0.32) <= 0.05).toBe(true);
    expect(a.physiology.fio2AtGas.kind === 'ok' && a.physiology.fio2AtGas.value.basis).toBe('order-estimate');
    expect(a.physiology.alveolarPo2.kind).toBe('ok');
    expect(a.physiology.expectedAaGradient.kind).toBe('unknown');
  });

  it('uses the recorded FiO2 at the time of the gas for PAO2', () => {
    // PAO2 = 0.21 x (PB - 47) - 40/0.8 with PB from ISA at 40 m (756.4 mmHg): 98.9 (check-values 3a method, D)
    const facts = buildFacts({
      bloodGases: [bloodGas({ ageMinutes: 60, ph: 7.4, paco2MmHg: 40, pao2MmHg: 85 })],
      fio2Fraction: [fio2(0.21, 65)],
    });
    const a = buildAssessment(facts, BTS, { now: NOW });
    expect(a.physiology.alveolarPo2.kind === 'ok' && a.physiology.alveolarPo2.value.value).toBeCloseTo(
      0.21 * (a.barometricPressure.mmHg - 47) - 40 / 0.8,
      6,
    );
    expect(a.physiology.expectedAaGradient.kind).toBe('ok');
  });

  it('computes ROX on high flow with the hours since the high-flow order began', () => {
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.5 })],
      activeOrders: [activeOrder({ device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.5, authoredOn: minutesAgo(180) })],
      spo2Percent: [spo2(92)],
      respRatePerMin: [respRate(30)],
      fio2Fraction: [fio2(0.5)],
    });
    const rox = buildAssessment(facts, BTS, { now: NOW }).physiology.rox;
    // Roca 2019: 92 / 0.5 / 30 = 6.13, >= 4.88 after 2 h is lower risk
    expect(rox.kind === 'ok' && rox.value.value).toStrictEqual({
      index: 92 / 0.5 / 30,
      hoursOnHighFlow: 3,
      interpretation: 'low-risk',
      fio2Fraction: 0.5,
      threshold: { timePoint: 2, failureBelow: 2.85, startKnown: true },
      thresholdNote: '3 h on high flow (from the earliest high-flow order, written 3 h ago): the 2-h threshold, 2.85',
    });
  });

  describe('edge cases', () => {
    it('takes the first subject order, or the one named', () => {
      const first = oxygenOrder({ reference: 'MedicationRequest/a' });
      const second = oxygenOrder({ reference: 'MedicationRequest/b' });
      const notSubject = oxygenOrder({ reference: 'MedicationRequest/c', isSubject: false });
      const facts = buildFacts({ orders: [notSubject, first, second] });
      expect(buildAssessment(facts, BTS, { now: NOW }).order?.reference).toBe('MedicationRequest/a');
      expect(buildAssessment(facts, BTS, { now: NOW, order: second }).order?.reference).toBe('MedicationRequest/b');
    });

    it('is unknown for an unrecognised device, naming the words used', () => {
      const facts = buildFacts({ orders: [oxygenOrder({ device: undefined, deviceText: 'O2 via hood' })] });
      expect(buildAssessment(facts, BTS, { now: NOW }).delivery).toStrictEqual({
        kind: 'unknown',
        reason: "device not recognised: 'O2 via hood'",
        missing: ['device'],
      });
    });

    it('builds an assessment without any order', () => {
      const a = buildAssessment(buildFacts({ orders: [] }), BTS, { now: NOW });
      expect(a.order).toBeUndefined();
      expect(a.targetComparison).toStrictEqual({ kind: 'no-order' });
    });
  });
});
