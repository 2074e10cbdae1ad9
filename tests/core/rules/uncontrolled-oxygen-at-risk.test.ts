import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/uncontrolled-oxygen-at-risk.js';
import { BUILT_IN_DEVICE_CATALOGUE } from '../../../src/core/devices/catalogue.js';
import type { StockedVenturiSetting } from '../../../src/core/policy.js';
import { activeOrder, bloodGas, BTS, buildFacts, condition, oxygenOrder, respRate, spo2, withPolicy } from '../facts-builder.js';
import { policyWithDevices, venturiLines } from '../devices/catalogue-policy.js';
import { expectCardRenders, expectRangeNamedAsPolicys, POLICY_AT_RISK_RANGES, policyWithAtRiskRange } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const reservoir = oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15, target: { lowPercent: 88, highPercent: 92, readFrom: 'text' } });
const copd = [condition('copd')];

describe('uncontrolled-oxygen-at-risk', () => {
  it('runs on both hooks as a warning by default', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('suggests a 28 % Venturi mask at 4 L/min for a COPD patient ordered a reservoir mask', () => {
    // BTS 2017, Table 4: controlled oxygen for patients at risk of hypercapnic respiratory failure,
    // e.g. a 28 % Venturi mask at 4 L/min; target 88-92 %.
    const facts = buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(90)] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.indicator).toBe('warning');
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 });
    expect(finding.values.advisedRange).toBe('88–92 %');
    const card = expectCardRenders(finding);
    expect(card.label).toBe('Change to Venturi mask 28 % at 4 L/min');
  });

  it('is critical when the current gas already shows hypercapnia', () => {
    // BTS 2017 clarification: hypercapnia is PaCO2 >= 6 kPa.
    const facts = buildFacts({
      orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 6 })],
      conditions: copd,
      spo2Percent: [spo2(93)],
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.36, paco2Kpa: 6.8, pao2Kpa: 8.2, hco3: 29 })],
    });
    expect(onlyFinding(runRule(rule, facts)).indicator).toBe('critical');
  });

  it.each([
    ['a nasal cannula at 2 L/min', oxygenOrder({ device: 'nasal-cannula', flowLPerMin: 2 })],
    ['a 28 % Venturi mask', oxygenOrder({ device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 })],
  ])('does not fire for a controlled device: %s (BTS 2017, Table 4)', (_name, order) => {
    expect(runRule(rule, buildFacts({ orders: [order], conditions: copd, spo2Percent: [spo2(90)] }))).toStrictEqual([]);
  });

  it('does not fire for a patient not at risk', () => {
    expect(runRule(rule, buildFacts({ orders: [reservoir], spo2Percent: [spo2(84)] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('never offers a Venturi mask to a patient on NIV', () => {
      // BTS 2017 Table 4 advises a Venturi for an at-risk patient on a mask; for a patient on NIV
      // (BTS/ICS 2016) a mask is a step down in support (common practice), so no change is offered.
      const facts = buildFacts({
        conditions: [condition('copd')],
        orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })],
        activeOrders: [activeOrder({ device: 'cpap-niv', flowLPerMin: undefined, setFio2Fraction: 0.35 })],
      });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('stays quiet for a critically ill at-risk patient with no gas yet, SpO2 below 85 %', () => {
      // BTS 2017, Table 1: critically ill at-risk patients get high-concentration oxygen until gases
      // are available; BTS 2017, Table 2: the 85 % threshold for a reservoir mask.
      expect(runRule(rule, buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(84)] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(88)] })).length).toBe(1);
    });

    it('stays quiet while SpO2 is below the at-risk range itself: a Venturi mask would cut the oxygen', () => {
      // BTS 2017, Table 4: controlled oxygen to 88-92 %; below 88 % the patient needs more oxygen, not less
      const facts = (sat: number) => buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(sat)] });
      expect(runRule(rule, facts(87))).toStrictEqual([]);
      expect(runRule(rule, facts(88)).length).toBe(1);
    });

    it('is critical once the gas shows hypercapnia, with SpO2 within the at-risk range', () => {
      // BTS 2017, Table 4; hypercapnia PaCO2 >= 6 kPa (BTS 2017 clarification)
      const facts = buildFacts({
        orders: [reservoir],
        conditions: copd,
        spo2Percent: [spo2(90)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.3, paco2Kpa: 7.5, pao2Kpa: 6.9, hco3: 32 })],
      });
      expect(onlyFinding(runRule(rule, facts)).indicator).toBe('critical');
    });

    it('does not fire after BTS re-targeting to the standard range (normal PaCO2, no previous failure)', () => {
      // BTS 2017, Tables 2-4: at-risk patient with a normal PaCO2 and no previous NIV -> 94-98 %.
      const facts = buildFacts({
        orders: [reservoir],
        conditions: copd,
        spo2Percent: [spo2(92)],
        bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.42, paco2Kpa: 5.1, pao2Kpa: 8.0, hco3: 24 })],
      });
      expect(runRule(rule, facts)).toStrictEqual([]);
    });
  });
});

describe('uncontrolled-oxygen-at-risk with a hospital device catalogue', () => {
  const RESERVOIR = '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }'; // BTS 2017 Table 2; BTS 2008
  const stocking = (valves: readonly (readonly [number, number])[]) =>
    policyWithDevices(['devices:', RESERVOIR, ...(valves.length === 0 ? [] : venturiLines(valves))]);
  // A COPD patient on a reservoir mask, SpO2 90 % inside the 88-92 % range (BTS 2017, Table 4)
  const copdOnReservoir = (rr?: number) =>
    buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(90)], ...(rr === undefined ? {} : { respRatePerMin: [respRate(rr)] }) });

  it('offers the 28 % valve when the hospital stocks no 24 % valve', () => {
    // BTS 2017, Table 4: 28 % at 4 L/min; 35 % and 60 % at 8 and 15 L/min (device labelling, common practice)
    const policy = stocking([
      [28, 4],
      [35, 8],
      [60, 15],
    ]);
    const finding = onlyFinding(runRule(rule, copdOnReservoir(), { policy }));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 });
    expect(expectCardRenders(finding).label).toBe('Change to Venturi mask 28 % at 4 L/min');
  });

  it('offers the 24 % valve at 2 L/min when the hospital stocks no 28 % valve', () => {
    // BTS 2017, Table 4: a 24 % Venturi at 2-3 L/min is the other controlled starting device
    const policy = stocking([
      [24, 2],
      [35, 8],
    ]);
    const finding = onlyFinding(runRule(rule, copdOnReservoir(), { policy }));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 });
    expect(expectCardRenders(finding).label).toBe('Change to Venturi mask 24 % at 2 L/min');
  });

  it.each([
    ['only 35 % and 60 % valves', [[35, 8], [60, 15]] as const],
    ['no Venturi mask', [] as const],
  ])('with %s stocked, says so in words and offers no device', (_name, valves) => {
    // BTS 2017, Table 4: 24 % or 28 % Venturi, or nasal cannulae at 1-2 L/min; a 35 % valve is not one of them
    const finding = onlyFinding(runRule(rule, copdOnReservoir(), { policy: stocking(valves) }));
    expect(finding.change).toBeUndefined();
    const card = expectCardRenders(finding);
    expect(card.detail).toContain('No 24 % or 28 % Venturi valve is stocked here');
    // The guideline's own advice names nasal cannulae; the offer does not, as none are stocked here.
    expect(card.detail.replace(/\s+/g, ' ')).toContain('or nasal cannulae at 1–2 L/min'); // BTS 2017, Table 4
    expect(finding.values.controlledDevice).not.toContain('nasal cannula');
    expect(card.detail).not.toContain('35 %');
  });

  it.each([
    [true, 'nasal cannulae at 1–2 L/min'], // BTS 2017, Table 4: nasal cannulae at 1-2 L/min for at-risk patients
    [false, undefined],
  ])('with no 24 or 28 per cent valve, names nasal cannulae as the other device only when stocked: %s', (cannulaStocked, named) => {
    // BTS 2017, Tables 2 and 4: nasal cannulae 1-6 L/min in adults
    const cannula = cannulaStocked ? ['  nasal-cannula: { flowLPerMin: { from: 1, to: 6 } }'] : [];
    const policy = policyWithDevices(['devices:', RESERVOIR, ...cannula, ...venturiLines([[35, 8]])]);
    const finding = onlyFinding(runRule(rule, copdOnReservoir(), { policy }));
    expect(finding.values.controlledDevice).toContain('No 24 % or 28 % Venturi valve is stocked here');
    if (named === undefined) expect(finding.values.controlledDevice).not.toContain('nasal cannula');
    else expect(finding.values.controlledDevice).toContain(named);
    expectCardRenders(finding);
  });

  it("offers the minimum flow printed on the hospital's valve", () => {
    // Invented label: a 28 % valve printed 5 L/min (manufacturers differ; BTS 2017 Table 4 gives 4 L/min)
    const policy = stocking([[28, 5]]);
    expect(onlyFinding(runRule(rule, copdOnReservoir(), { policy })).change).toMatchObject({ flowLPerMin: 5, setFio2Fraction: 0.28 });
  });

  it.each([
    // BTS 2017, Table 4: RR > 30/min -> 1.5 x the minimum: 28 % 4 -> 6 L/min, 24 % 2 -> 3 L/min
    ['28 % valve', [[24, 2], [28, 4]] as const, 0.28, 6],
    ['24 % valve', [[24, 2], [35, 8]] as const, 0.24, 3],
  ])('raises the %s by the policy multiplier when the respiratory rate is above its threshold', (_name, valves, setting, flow) => {
    const finding = onlyFinding(runRule(rule, copdOnReservoir(34), { policy: stocking(valves) }));
    expect(finding.change).toStrictEqual({ kind: 'set-device', device: 'venturi-mask', flowLPerMin: flow, setFio2Fraction: setting });
    expect(expectCardRenders(finding).detail).toContain('raised for a respiratory rate above 30/min');
  });

  it('reads the tachypnoea threshold and multiplier from the policy, not the guideline', () => {
    // Invented local thresholds: above 25/min, double the flow (BTS 2017 Table 4 says above 30/min, 1.5 x)
    const base = stocking([[28, 4]]);
    const policy = withPolicy(base, { thresholds: { ...base.thresholds, venturiTachypnoeaRespRateAbove: 25, venturiTachypnoeaFlowMultiplier: 2 } });
    expect(onlyFinding(runRule(rule, copdOnReservoir(28), { policy })).change).toMatchObject({ flowLPerMin: 8 });
    expect(onlyFinding(runRule(rule, copdOnReservoir(25), { policy })).change).toMatchObject({ flowLPerMin: 4 });
  });

  it('never offers a valve the hospital does not stock, nor one that is not controlled, over every catalogue of the standard valves', () => {
    // Every subset of the standard valves at their usual minimums (BTS 2017 Table 4; device labelling)
    const standard = BUILT_IN_DEVICE_CATALOGUE.venturiSettings;
    for (let mask = 0; mask < 2 ** standard.length; mask += 1) {
      const stocked: StockedVenturiSetting[] = standard.filter((_s, i) => (mask & (2 ** i)) !== 0);
      const policy = withPolicy(BTS, { devices: { ...BTS.devices, venturiSettings: stocked } });
      for (const rr of [18, 34]) {
        const finding = onlyFinding(runRule(rule, copdOnReservoir(rr), { policy }));
        const change = finding.change;
        const controlled = stocked.find((s) => s.fio2Fraction === 0.28) ?? stocked.find((s) => s.fio2Fraction === 0.24);
        if (controlled === undefined) {
          expect(change).toBeUndefined();
          continue;
        }
        expect(change).toStrictEqual({
          kind: 'set-device',
          device: 'venturi-mask',
          setFio2Fraction: controlled.fio2Fraction,
          flowLPerMin: controlled.minimumFlowLPerMin * (rr > 30 ? 1.5 : 1),
        });
      }
    }
  });
});

describe('uncontrolled-oxygen-at-risk under a range the policy chose', () => {
  // A policy or unit may set its own at-risk range (docs/policy.md); the card must not say the
  // guideline gives it (ranges and their sources in card-check.ts).
  it.each(POLICY_AT_RISK_RANGES)('names the at-risk range %i-%i as this policy\'s, never as BTS 2017\'s', (lowPercent, highPercent) => {
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: [reservoir], conditions: copd, spo2Percent: [spo2(highPercent)] }), { policy: policyWithAtRiskRange(lowPercent, highPercent) }));
    expectRangeNamedAsPolicys(finding, lowPercent, highPercent);
  });
});

