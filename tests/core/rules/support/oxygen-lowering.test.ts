import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { buildAssessment } from '../../../../src/core/assessment/build-assessment.js';
import { estimateDelivery } from '../../../../src/core/devices/index.js';
import { evaluateOrder } from '../../../../src/core/engine.js';
import { changeLowersOxygen, reasonNotToLowerOxygen } from '../../../../src/core/rules/support/oxygen-lowering.js';
import type { ConditionKind, Facts, OrderChange, OxygenOrder, SaturationRange } from '../../../../src/core/types.js';
import {
  BTS,
  NOW,
  activeOrder,
  bloodGas,
  buildFacts,
  condition,
  fio2,
  o2Flow,
  oxygenOrder,
  respRate,
  spo2,
} from '../../facts-builder.js';

const assess = (facts: Facts) => buildAssessment(facts, BTS, { now: NOW });

/** HCO3 from pH and PCO2 by Henderson–Hasselbalch (pK 6.1, 0.0307 mmol/L per mmHg; from memory). */
const hendersonHasselbalchHco3 = (ph: number, paco2Kpa: number): number => 0.0307 * paco2Kpa * 7.50062 * 10 ** (ph - 6.1);

/**
 * The test's own judge of "less oxygen": a lower flow than ordered (or, without one, than the latest
 * recorded flow), or a device whose estimated FiO2 is below the ordered device's at the same breathing.
 */
function lowersOxygen(change: OrderChange, order: OxygenOrder, facts: Facts): boolean {
  if (change.kind === 'set-flow') {
    const running = order.flowLPerMin ?? facts.o2FlowLPerMin[0]?.value;
    return running !== undefined && change.flowLPerMin < running;
  }
  if (change.kind === 'set-device' && order.device !== undefined) {
    const rr = facts.respRatePerMin[0]?.value;
    const breathing = rr === undefined ? {} : { respRatePerMin: rr };
    const before = estimateDelivery(order.device, {
      ...(order.flowLPerMin === undefined ? {} : { flowLPerMin: order.flowLPerMin }),
      ...(order.setFio2Fraction === undefined ? {} : { setFio2Fraction: order.setFio2Fraction }),
      ...breathing,
    });
    const after = estimateDelivery(change.device, {
      flowLPerMin: change.flowLPerMin,
      ...(change.setFio2Fraction === undefined ? {} : { setFio2Fraction: change.setFio2Fraction }),
      ...breathing,
    });
    return before.kind === 'ok' && after.kind === 'ok' && after.value.fio2.estimate < before.value.fio2.estimate - 0.005;
  }
  return false;
}

const ranges: readonly (SaturationRange | undefined)[] = [
  undefined,
  { lowPercent: 94, highPercent: 98 }, // BTS 2017, Tables 1-3
  { lowPercent: 88, highPercent: 92 }, // BTS 2017, Table 4
  { lowPercent: 92, highPercent: 96 }, // TSANZ 2015
];

/** Orders across the device table (flows within each device's usual range, check-values §2a). */
const orders: fc.Arbitrary<OxygenOrder> = fc
  .record({
    device: fc.constantFrom('nasal-cannula', 'simple-face-mask', 'reservoir-mask', 'venturi-mask', 'high-flow-nasal-cannula'),
    unit: fc.double({ min: 0, max: 1, noNaN: true }),
    setting: fc.constantFrom(0.24, 0.28, 0.35, 0.4, 0.6),
    target: fc.constantFrom(...ranges),
  })
  .map(({ device, unit, setting, target }) => {
    const flows = {
      'nasal-cannula': [1, 6],
      'simple-face-mask': [5, 10],
      'reservoir-mask': [10, 15],
      'venturi-mask': [2, 15],
      'high-flow-nasal-cannula': [20, 60],
    } as const;
    const [low, high] = flows[device];
    return oxygenOrder({
      device,
      flowLPerMin: Math.round(low + unit * (high - low)),
      setFio2Fraction: device === 'venturi-mask' || device === 'high-flow-nasal-cannula' ? setting : undefined,
      target: target === undefined ? undefined : { ...target, readFrom: 'structured' },
    });
  });

const acuteCauses: readonly ConditionKind[] = ['acute-asthma', 'sedative-or-opioid-toxicity'];
const anyConditions: readonly ConditionKind[] = [...acuteCauses, 'copd', 'neuromuscular-disease', 'previous-niv-or-imv'];

interface Surroundings {
  readonly spo2Percent: number;
  readonly respRatePerMin: number;
  readonly recordedFlow: number | undefined;
  readonly recordedFio2: number | undefined;
  readonly runningFlow: number | undefined;
}

/** Everything around the order: SpO2, breathing, what is recorded and running. */
const surroundings: fc.Arbitrary<Surroundings> = fc.record({
  spo2Percent: fc.integer({ min: 70, max: 100 }),
  respRatePerMin: fc.integer({ min: 8, max: 44 }),
  recordedFlow: fc.option(fc.integer({ min: 1, max: 15 }), { nil: undefined }),
  recordedFio2: fc.option(fc.constantFrom(0.21, 0.28, 0.4, 0.6), { nil: undefined }),
  runningFlow: fc.option(fc.integer({ min: 1, max: 15 }), { nil: undefined }),
});

function factsFrom(order: OxygenOrder, around: Surroundings, extra: Partial<Facts>): Facts {
  return buildFacts({
    orders: [order],
    activeOrders: around.runningFlow === undefined ? [] : [activeOrder({ device: order.device, flowLPerMin: around.runningFlow })],
    spo2Percent: [spo2(around.spo2Percent, 10)],
    respRatePerMin: [respRate(around.respRatePerMin, 10)],
    o2FlowLPerMin: around.recordedFlow === undefined ? [] : [o2Flow(around.recordedFlow, 10)],
    fio2Fraction: around.recordedFio2 === undefined ? [] : [fio2(around.recordedFio2, 10)],
    ...extra,
  });
}

describe('reasonNotToLowerOxygen', () => {
  it.each<[string, Partial<Facts>, string | undefined]>([
    // pH < 7.35 (RCEM) with PaCO2 >= 6 kPa (BTS 2017 clarification); HCO3 25 within the acute rise (check-values 3g)
    ['acute hypercapnic acidosis in asthma', { conditions: [condition('acute-asthma')], bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.26, paco2Kpa: 7.9, hco3: 25 })] }, 'the current gas shows hypercapnic acidosis'],
    ['acute-on-chronic acidosis in COPD', { conditions: [condition('copd')], bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.29, paco2Kpa: 8.4, hco3: 30 })] }, 'the current gas shows hypercapnic acidosis'],
    // pH 7.36 in range (RCEM) with PaCO2 6.1 kPa and HCO3 25.5: acute, not yet acidaemic
    ['acute hypercapnia with pH in range', { bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.36, paco2Kpa: 6.1, hco3: 25.5 })] }, 'the current gas shows acute hypercapnia without chronic CO2 retention'],
    // 92 % against 94-98 % (BTS 2017, Tables 1-3)
    ['SpO2 below the standard range', { spo2Percent: [spo2(92)] }, 'SpO2 is below the target range'],
    // chronic compensated COPD above 88-92 % (BTS 2017 Table 4): stepping down is titration
    ['chronic compensated COPD above its range', { conditions: [condition('copd')], bloodGases: [bloodGas({ ageMinutes: 20, ph: 7.38, paco2Kpa: 7.4, hco3: 32 })], spo2Percent: [spo2(95)] }, undefined],
    ['SpO2 within range, no gas', { spo2Percent: [spo2(96)] }, undefined],
  ])('%s', (_, parts, reason) => {
    expect(reasonNotToLowerOxygen(assess(buildFacts(parts)))).toBe(reason);
  });

  describe('edge cases', () => {
    it('reads SpO2 exactly at the lower bound as not below target', () => {
      // BTS 2017: the range includes its bounds
      expect(reasonNotToLowerOxygen(assess(buildFacts({ spo2Percent: [spo2(94)] })))).toBeUndefined();
      expect(reasonNotToLowerOxygen(assess(buildFacts({ spo2Percent: [spo2(93)] })))).toBe('SpO2 is below the target range');
    });

    it('uses the applicable range when it is higher than the ordered one', () => {
      // 93 % on an 88-92 % order with no risk: below the 94-98 % that applies (BTS 2017, Tables 1-3)
      const facts = buildFacts({
        orders: [oxygenOrder({ target: { lowPercent: 88, highPercent: 92, readFrom: 'structured' } })],
        spo2Percent: [spo2(93)],
      });
      expect(reasonNotToLowerOxygen(assess(facts))).toBe('SpO2 is below the target range');
    });
  });
});

describe('changeLowersOxygen', () => {
  const facts = buildFacts({ orders: [oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 })], respRatePerMin: [respRate(20)] });
  const assessment = assess(facts);

  it.each<[string, OrderChange, boolean]>([
    ['a lower flow', { kind: 'set-flow', flowLPerMin: 12 }, true],
    ['the same flow', { kind: 'set-flow', flowLPerMin: 15 }, false],
    // reservoir mask FiO2 0.60-0.90 against a 28 % Venturi mask (check-values §2a)
    ['a 28 % Venturi mask', { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, true],
    ['a new target range', { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } }, false],
  ])('judges %s against a reservoir mask at 15 L/min', (_, change, lowers) => {
    expect(changeLowersOxygen(change, assessment, facts)).toBe(lowers);
  });

  describe('edge cases', () => {
    it('compares a flow with the latest recorded flow when the order states none', () => {
      const noFlow = buildFacts({ orders: [oxygenOrder({ flowLPerMin: undefined })], o2FlowLPerMin: [o2Flow(4)] });
      expect(changeLowersOxygen({ kind: 'set-flow', flowLPerMin: 3 }, assess(noFlow), noFlow)).toBe(true);
      expect(changeLowersOxygen({ kind: 'set-flow', flowLPerMin: 5 }, assess(noFlow), noFlow)).toBe(false);
    });

    it('does not call a change lowering without an order', () => {
      const none = buildFacts({ orders: [] });
      expect(changeLowersOxygen({ kind: 'set-flow', flowLPerMin: 1 }, assess(none), none)).toBe(false);
    });
  });
});

describe('invariants over generated orders (through the engine)', () => {
  it('no finding changes the order to less oxygen while the gas shows hypercapnic acidosis', () => {
    // pH below 7.35 (RCEM) with PaCO2 at or above 6 kPa (BTS 2017 clarification), acute or acute-on-chronic
    fc.assert(
      fc.property(
        orders,
        surroundings,
        fc.double({ min: 7.05, max: 7.34, noNaN: true }),
        fc.double({ min: 6.0, max: 11, noNaN: true }),
        fc.subarray([...anyConditions]),
        (order, around, ph, paco2Kpa, kinds) => {
          const gas = bloodGas({ ageMinutes: 20, ph, paco2Kpa, hco3: Math.round(hendersonHasselbalchHco3(ph, paco2Kpa) * 10) / 10 });
          const facts = factsFrom(order, around, { bloodGases: [gas], conditions: kinds.map((k) => condition(k)) });
          const { findings, assessment } = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW });
          expect(['acute', 'acute-on-chronic']).toContain(assessment.hypercapnicRisk.classification.kind);
          for (const finding of findings) {
            if (finding.change !== undefined) {
              expect(lowersOxygen(finding.change, order, facts), `${finding.ruleId} lowers oxygen`).toBe(false);
            }
          }
        },
      ),
      { numRuns: 150 },
    );
  });

  it('a tiring patient without chronic retention is never moved to the at-risk range by default', () => {
    // policy default `keep` (BTS 2017 keeps acute asthma at 94-98 %); HCO3 within the acute rise (check-values 3g)
    fc.assert(
      fc.property(
        orders,
        surroundings,
        fc.double({ min: 7.05, max: 7.34, noNaN: true }),
        fc.double({ min: 6.0, max: 11, noNaN: true }),
        fc.subarray([...acuteCauses]),
        (order, around, ph, paco2Kpa, kinds) => {
          const acuteRise = 24 + (paco2Kpa * 7.50062 - 40) / 10; // 1 mmol/L per 10 mmHg (check-values 3g)
          const gas = bloodGas({ ageMinutes: 20, ph, paco2Kpa, hco3: Math.round(acuteRise * 10) / 10 });
          const facts = factsFrom(order, around, { bloodGases: [gas], conditions: kinds.map((k) => condition(k)) });
          const { findings, assessment } = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW });
          expect(assessment.hypercapnicRisk.classification.kind).toBe('acute');
          expect(assessment.target).toMatchObject({ range: BTS.targets.standard });
          expect(findings.map((f) => f.ruleId)).toContain('hypercapnia-without-chronic-retention');
          expect(findings.map((f) => f.ruleId)).not.toContain('acute-hypercapnic-acidosis');
          for (const finding of findings) {
            if (finding.change?.kind === 'set-target') {
              expect(finding.change.range.lowPercent).toBeGreaterThanOrEqual(BTS.targets.standard.lowPercent);
            }
          }
        },
      ),
      { numRuns: 150 },
    );
  });

  it('no finding changes the order to less oxygen while SpO2 is below the target range', () => {
    fc.assert(
      fc.property(orders, surroundings, fc.subarray([...anyConditions]), (order, around, kinds) => {
        const facts = factsFrom(order, around, { conditions: kinds.map((k) => condition(k)) });
        const { findings, assessment } = evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW });
        const lows = [assessment.titrationTarget?.range.lowPercent, assessment.target.kind === 'range' ? assessment.target.range.lowPercent : undefined];
        fc.pre(lows.some((low) => low !== undefined && around.spo2Percent < low));
        for (const finding of findings) {
          if (finding.change !== undefined) {
            expect(lowersOxygen(finding.change, order, facts), `${finding.ruleId} lowers oxygen`).toBe(false);
          }
        }
      }),
      { numRuns: 150 },
    );
  });
});
