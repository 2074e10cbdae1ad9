import { describe, expect, it } from 'vitest';
import { evaluateOrder } from '../../src/core/engine.js';
import { RULES } from '../../src/core/rules/index.js';
import type { Facts } from '../../src/core/types.js';
import {
  BTS,
  NOW,
  bloodGas,
  buildFacts,
  condition,
  oxygenOrder,
  respRate,
  spo2,
  withPolicy,
} from './facts-builder.js';

/** The worked case: kyphoscoliosis, PaCO2 6.7 kPa this morning, 3 L/min nasal cannula at 94-98 %. */
const workedCase: Facts = buildFacts({
  patient: { ageYears: 64, bmiKgPerM2: 23 },
  orders: [oxygenOrder({ flowLPerMin: 3 })],
  conditions: [condition('chest-wall-deformity')],
  bloodGases: [bloodGas({ ageMinutes: 240, ph: 7.37, paco2Kpa: 6.7, pao2Kpa: 8.2, hco3: 28 })],
  spo2Percent: [spo2(95)],
  respRatePerMin: [respRate(20)],
});

const RANK = { critical: 0, warning: 1, info: 2 } as const;

describe('evaluateOrder', () => {
  it('advises 88-92 % in the worked case, with the repeat gas and the summary', () => {
    // BTS 2017, Table 4 (88-92 %); BTS 2017, Tables 2-4 (repeat gas in 30-60 min)
    const result = evaluateOrder(workedCase, BTS, { hook: 'order-sign', now: NOW });
    expect(result.findings.map((f) => [f.ruleId, f.indicator])).toStrictEqual([
      ['target-above-hypercapnic-range', 'critical'],
      ['repeat-blood-gas-due', 'info'],
      ['oxygenation-summary', 'info'],
    ]);
    expect(result.findings[0]?.change).toStrictEqual({ kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } });
    expect(result.assessment.target).toMatchObject({ range: { lowPercent: 88, highPercent: 92 } });
  });

  it('runs only the order-select rules on order-select', () => {
    const result = evaluateOrder(workedCase, BTS, { hook: 'order-select', now: NOW });
    const selectIds = new Set(RULES.filter((r) => r.hooks.includes('order-select')).map((r) => r.id));
    expect(result.findings.map((f) => f.ruleId)).toStrictEqual(['target-above-hypercapnic-range']);
    expect(result.findings.every((f) => selectIds.has(f.ruleId))).toBe(true);
  });

  it('orders findings critical, then warning, then info', () => {
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 3, target: undefined })],
      conditions: [condition('copd')],
      bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.29, paco2Kpa: 8.1, pao2Kpa: 7.6 })],
      missingData: ['encounter'],
    });
    const indicators = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW }).findings.map((f) => f.indicator);
    expect(indicators).toContain('critical');
    expect(indicators).toContain('warning');
    expect(indicators).toContain('info');
    expect([...indicators].sort((a, b) => RANK[a] - RANK[b])).toStrictEqual(indicators);
  });

  it('skips rules the policy disables', () => {
    const policy = withPolicy(BTS, { disabledRules: ['target-above-hypercapnic-range', 'oxygenation-summary'] });
    const ids = evaluateOrder(workedCase, policy, { hook: 'order-sign', now: NOW }).findings.map((f) => f.ruleId);
    expect(ids).toStrictEqual(['repeat-blood-gas-due']);
  });

  it('applies the policy severity overrides and re-sorts', () => {
    const policy = withPolicy(BTS, { severity: { 'repeat-blood-gas-due': 'critical', 'target-above-hypercapnic-range': 'warning' } });
    const result = evaluateOrder(workedCase, policy, { hook: 'order-sign', now: NOW });
    expect(result.findings.map((f) => [f.ruleId, f.indicator])).toStrictEqual([
      ['repeat-blood-gas-due', 'critical'],
      ['target-above-hypercapnic-range', 'warning'],
      ['oxygenation-summary', 'info'],
    ]);
  });

  it("keeps each policy's disabled rules and severities to itself, and applies them on a unit with its own range", () => {
    const ward = 'Larkspur Bay General Hospital, Ward 9 (demo)';
    const onWard = { ...workedCase, encounterUnit: ward };
    const units = [
      {
        name: 'Ward 9',
        match: { names: [ward], patterns: [], locations: [] },
        targets: { standard: { lowPercent: 92, highPercent: 96 }, hypercapnicRisk: undefined }, // PILOT 2022 intermediate arm
        basisKey: undefined,
      },
    ];
    const quiet = withPolicy(BTS, { units, disabledRules: ['oxygenation-summary'] });
    const loud = withPolicy(BTS, { units, severity: { 'repeat-blood-gas-due': 'critical' } });
    const run = (policy: typeof BTS) =>
      evaluateOrder(onWard, policy, { hook: 'order-sign', now: NOW }).findings.map((f) => [f.ruleId, f.indicator]);
    // Taking turns, so a choice remembered for one policy would show under the other.
    for (let round = 0; round < 2; round += 1) {
      expect(run(quiet)).toStrictEqual([
        ['target-above-hypercapnic-range', 'critical'], // BTS 2017, Table 4 (88-92 %)
        ['repeat-blood-gas-due', 'info'], // BTS 2017, Tables 2-4 (repeat gas in 30-60 min)
      ]);
      expect(run(loud)).toStrictEqual([
        ['target-above-hypercapnic-range', 'critical'], // BTS 2017, Table 4 (88-92 %)
        ['repeat-blood-gas-due', 'critical'],
        ['oxygenation-summary', 'info'],
      ]);
    }
  });

  it('evaluates each subject order and states patient-level findings once', () => {
    const facts = buildFacts({
      orders: [
        oxygenOrder({ reference: 'MedicationRequest/a', target: undefined }),
        oxygenOrder({ reference: 'MedicationRequest/b', device: 'simple-face-mask', flowLPerMin: 3 }),
      ],
      missingData: ['conditions'],
    });
    const result = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW });
    expect(result.assessments.map((a) => a.order?.reference)).toStrictEqual(['MedicationRequest/a', 'MedicationRequest/b']);
    expect(result.assessment).toBe(result.assessments[0]);
    const pairs = result.findings.map((f) => `${f.ruleId} ${f.orderReference ?? '-'}`);
    expect(pairs).toContain('target-range-missing MedicationRequest/a');
    expect(pairs).toContain('flow-outside-device-range MedicationRequest/b');
    // Two oxygen orders signed together: one card about both (common practice).
    expect(pairs.filter((p) => p.startsWith('duplicate-oxygen-order'))).toStrictEqual(['duplicate-oxygen-order -']);
    expect(pairs.filter((p) => p.startsWith('required-data-unavailable'))).toStrictEqual(['required-data-unavailable -']);
  });

  it('runs only the rules for all ages below the policy minimum age', () => {
    // population.minimumAgeYears 16 (bundled policy, common practice)
    const child = { ...workedCase, patient: { ageYears: 12, bmiKgPerM2: 20 } };
    const result = evaluateOrder(child, BTS, { hook: 'order-sign', now: NOW });
    expect(result.assessment.population).toStrictEqual({ kind: 'below-minimum-age', ageYears: 12, minimumAgeYears: 16 });
    expect(result.findings.map((f) => f.ruleId)).toStrictEqual(['adult-checks-only']);
  });

  it('withholds a one-click fall in oxygen while the gas shows hypercapnic acidosis, keeping the card', () => {
    // COPD (BTS 2017 Table 4: 88-92 %) on a reservoir mask, SpO2 90 %, pH 7.30 with PaCO2 7.5 kPa
    // (acidosis below 7.35, RCEM; hypercapnia >= 6 kPa, BTS 2017): the controlled-oxygen card stays,
    // but its switch to a 28 % Venturi mask is not offered as a one-click change
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15, target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
      conditions: [condition('copd')],
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.3, paco2Kpa: 7.5, hco3: 32 })],
      spo2Percent: [spo2(90)],
    });
    const findings = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW }).findings;
    const controlled = findings.find((f) => f.ruleId === 'uncontrolled-oxygen-at-risk');
    expect(controlled).toBeDefined();
    expect(controlled?.change).toBeUndefined();
    const compensated = { ...facts, bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.37, paco2Kpa: 6.4, hco3: 28 })], spo2Percent: [spo2(97)] };
    const above = evaluateOrder(compensated, BTS, { hook: 'order-sign', now: NOW }).findings;
    expect(above.find((f) => f.ruleId === 'uncontrolled-oxygen-at-risk')?.change).toMatchObject({ kind: 'set-device', device: 'venturi-mask' });
  });

  describe('edge cases', () => {
    it('assesses the patient alone when no order is a subject', () => {
      const facts = buildFacts({ orders: [oxygenOrder({ isSubject: false })], missingData: ['observations'] });
      const result = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW });
      expect(result.assessment.order).toBeUndefined();
      expect(result.findings.map((f) => f.ruleId)).toStrictEqual(['no-recent-spo2', 'required-data-unavailable']);
    });

    it('gives the same answer for the same input', () => {
      const first = evaluateOrder(workedCase, BTS, { hook: 'order-sign', now: NOW });
      const second = evaluateOrder(workedCase, BTS, { hook: 'order-sign', now: NOW });
      expect(second).toStrictEqual(first);
    });

    it('returns no findings for an oxygen order that is in order', () => {
      const facts = buildFacts({
        orders: [oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 2 })],
        spo2Percent: [spo2(96)],
      });
      const ids = evaluateOrder(facts, BTS, { hook: 'order-select', now: NOW }).findings.map((f) => f.ruleId);
      expect(ids).toStrictEqual([]);
    });
  });
});

describe('evaluateOrder with a hospital device catalogue', () => {
  // A pneumothorax under observation on a nasal cannula: BTS 2017 Table 2 advises a reservoir mask at
  // 15 L/min; pneumothorax-oxygen offers it as a one-click change under the bundled policy.
  const pneumothorax = buildFacts({ conditions: [condition('pneumothorax')], spo2Percent: [spo2(95)] });
  const offered = (policy: typeof BTS) =>
    evaluateOrder(pneumothorax, policy, { hook: 'order-sign', now: NOW }).findings.find((f) => f.ruleId === 'pneumothorax-oxygen');

  it('offers a stocked reservoir mask', () => {
    expect(offered(BTS)?.change).toStrictEqual({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 15 });
  });

  it('withholds the change, and keeps the card, where the hospital stocks no reservoir mask', () => {
    const { 'reservoir-mask': _dropped, ...others } = BTS.devices.flowLimits;
    const policy = withPolicy(BTS, { devices: { ...BTS.devices, flowLimits: others } });
    const finding = offered(policy);
    expect(finding).toBeDefined();
    expect(finding?.change).toBeUndefined();
  });
});
