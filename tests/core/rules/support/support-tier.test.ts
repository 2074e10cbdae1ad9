import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { deviceTier, tierRank } from '../../../../src/core/devices/device-tier.js';
import type { SupportTier } from '../../../../src/core/devices/device-tier.js';
import { evaluateOrder } from '../../../../src/core/engine.js';
import { keepTier, patientSupportTier } from '../../../../src/core/rules/support/support-tier.js';
import { DEVICE_KINDS } from '../../../../src/core/types.js';
import type { ConditionKind, DeviceKind } from '../../../../src/core/types.js';
import { BTS, NOW, activeOrder, buildFacts, condition, fio2, o2Flow, oxygenOrder, respRate, spo2 } from '../../facts-builder.js';

/** The value type an arbitrary generates. */
type ValueOf<A> = A extends fc.Arbitrary<infer T> ? T : never;

// Invented Larkspur Bay General Hospital patients, generated.
const scenario = fc.record({
  device: fc.constantFrom(...DEVICE_KINDS),
  flow: fc.constantFrom(1, 2, 4, 6, 10, 15, 40, 60), // the devices' usual ranges (BTS 2017 Tables 2 and 4; check-values 2a)
  setFio2: fc.option(fc.constantFrom(0.24, 0.28, 0.35, 0.4, 0.6, 0.8), { nil: undefined }),
  active: fc.array(fc.constantFrom(...DEVICE_KINDS), { maxLength: 2 }),
  recordedFlow: fc.option(fc.constantFrom(2, 15, 22.5, 30, 50), { nil: undefined }),
  spo2: fc.integer({ min: 70, max: 100 }),
  condition: fc.option(fc.constantFrom<ConditionKind>('copd', 'pneumothorax', 'cluster-headache', 'carbon-monoxide-poisoning'), { nil: undefined }),
});

/** The tier the patient is on, worked out here from the scenario itself. */
function expectedTier(s: ValueOf<typeof scenario>): SupportTier {
  const tiers = [s.device, ...s.active].map((kind: DeviceKind) => deviceTier(kind));
  // Above 22.5 L/min (a Venturi 60 % at 15 L/min raised by half, BTS 2017 Table 4) only high flow is run
  if (s.recordedFlow !== undefined && s.recordedFlow > 22.5) {
    tiers.push('high-flow');
  }
  return tiers.reduce((a, b) => (tierRank(b) > tierRank(a) ? b : a));
}

describe('patientSupportTier', () => {
  it('is the highest tier of the order, the orders on record and a recorded high flow', () => {
    const facts = buildFacts({ orders: [oxygenOrder()], activeOrders: [activeOrder({ device: 'venturi-mask' })], o2FlowLPerMin: [o2Flow(45)] });
    expect(patientSupportTier(facts, facts.orders[0], BTS, NOW)).toBe('high-flow');
    expect(patientSupportTier(buildFacts(), oxygenOrder(), BTS, NOW)).toBe('conventional-oxygen');
  });

  describe('edge cases', () => {
    it('ignores a recorded flow older than the vital-signs window', () => {
      // freshness.vitalSignsMinutes 240 (local choice)
      const facts = buildFacts({ o2FlowLPerMin: [o2Flow(45, 300)] });
      expect(patientSupportTier(facts, oxygenOrder(), BTS, NOW)).toBe('conventional-oxygen');
    });

    it('lets a flow change and a same-tier device change through, and stops a step down', () => {
      expect(keepTier({ kind: 'set-flow', flowLPerMin: 15 }, 'pressure-support')).toStrictEqual({ kind: 'set-flow', flowLPerMin: 15 });
      expect(keepTier({ kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4 }, 'conventional-oxygen')?.kind).toBe('set-device');
      expect(keepTier({ kind: 'set-device', device: 'reservoir-mask', flowLPerMin: 15 }, 'high-flow')).toBeUndefined();
    });
  });
});

describe('invariant: no suggestion offers a lower tier of device than the patient is on', () => {
  it('holds for every rule over generated orders, orders on record and recorded flows', () => {
    fc.assert(
      fc.property(scenario, (s) => {
        const facts = buildFacts({
          orders: [oxygenOrder({ device: s.device, flowLPerMin: s.flow, setFio2Fraction: s.setFio2 })],
          activeOrders: s.active.map((device, i) => activeOrder({ reference: `MedicationRequest/on-record-${i}`, device, flowLPerMin: 15 })),
          o2FlowLPerMin: s.recordedFlow === undefined ? [] : [o2Flow(s.recordedFlow)],
          fio2Fraction: s.setFio2 === undefined ? [] : [fio2(s.setFio2)],
          spo2Percent: [spo2(s.spo2)],
          respRatePerMin: [respRate(24)],
          conditions: s.condition === undefined ? [] : [condition(s.condition)],
        });
        const tier = expectedTier(s);
        for (const finding of evaluateOrder(facts, BTS, { hook: 'order-sign', now: NOW }).findings) {
          if (finding.change?.kind === 'set-device') {
            expect(tierRank(deviceTier(finding.change.device)), `${finding.ruleId} offered ${finding.change.device}`).toBeGreaterThanOrEqual(tierRank(tier));
          }
        }
      }),
      { seed: 6010, numRuns: 400 },
    );
  });
});
