import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parse as parseYaml } from 'yaml';
import { DEVICE_MODELS, estimateDelivery } from '../../../src/core/devices/index.js';
import type { DeliveryInput } from '../../../src/core/devices/index.js';
import { DEVICE_KINDS } from '../../../src/core/types.js';
import type { DeviceKind } from '../../../src/core/types.js';

const policy = parseYaml(readFileSync(new URL('../../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8')) as {
  references: Record<string, unknown>;
};
const referenceKeys = Object.keys(policy.references);

const kinds = fc.constantFrom(...DEVICE_KINDS);
const inputs: fc.Arbitrary<DeliveryInput> = fc.record(
  {
    flowLPerMin: fc.double({ min: 0, max: 80, noNaN: true }),
    setFio2Fraction: fc.constantFrom(0.21, 0.24, 0.28, 0.31, 0.35, 0.4, 0.5, 0.6, 0.8, 1),
    respRatePerMin: fc.double({ min: 4, max: 60, noNaN: true }),
  },
  { requiredKeys: [] },
);
const lowFlowKinds: readonly DeviceKind[] = ['nasal-cannula', 'simple-face-mask', 'reservoir-mask', 'tracheostomy-mask'];

describe('device registry', () => {
  it('has one model for every device kind, under its own kind', () => {
    expect(Object.keys(DEVICE_MODELS).sort()).toStrictEqual([...DEVICE_KINDS].sort());
    for (const kind of DEVICE_KINDS) {
      expect(DEVICE_MODELS[kind].kind).toBe(kind);
      expect(DEVICE_MODELS[kind].flowRangeLPerMin.min).toBeLessThan(DEVICE_MODELS[kind].flowRangeLPerMin.max);
    }
    expect(Object.isFrozen(DEVICE_MODELS)).toBe(true);
  });

  it('gives the same answer through estimateDelivery as through the model', () => {
    const input = { flowLPerMin: 4, setFio2Fraction: 0.28, respRatePerMin: 22 };
    for (const kind of DEVICE_KINDS) {
      expect(estimateDelivery(kind, input)).toStrictEqual(DEVICE_MODELS[kind].estimate(input));
    }
  });

  it('keeps every estimate within 0.21-1 with low ≤ estimate ≤ high, and cites known references', () => {
    fc.assert(
      fc.property(kinds, inputs, (kind, input) => {
        const outcome = estimateDelivery(kind, input);
        if (outcome.kind === 'unknown') {
          expect(outcome.reason.length).toBeGreaterThan(0);
          return;
        }
        const { fio2, notes, sourceKeys } = outcome.value;
        expect(fio2.low).toBeGreaterThanOrEqual(0.21);
        expect(fio2.low).toBeLessThanOrEqual(fio2.estimate);
        expect(fio2.estimate).toBeLessThanOrEqual(fio2.high);
        expect(fio2.high).toBeLessThanOrEqual(1);
        expect(notes.length).toBeGreaterThan(0);
        for (const key of sourceKeys) {
          expect(referenceKeys).toContain(key);
        }
      }),
      { numRuns: 500 },
    );
  });

  it('never lowers a low-flow estimate when the flow rises, nor raises it when breathing quickens', () => {
    // mass balance: more oxygen per breath raises FiO2; more breathing dilutes it (check-values pitfall 9)
    fc.assert(
      fc.property(
        fc.constantFrom(...lowFlowKinds),
        fc.double({ min: 0, max: 15, noNaN: true }),
        fc.double({ min: 0, max: 5, noNaN: true }),
        fc.double({ min: 8, max: 45, noNaN: true }),
        fc.double({ min: 0, max: 15, noNaN: true }),
        (kind, flow, extraFlow, rr, extraRate) => {
          const base = estimateDelivery(kind, { flowLPerMin: flow, respRatePerMin: rr });
          const moreFlow = estimateDelivery(kind, { flowLPerMin: flow + extraFlow, respRatePerMin: rr });
          const faster = estimateDelivery(kind, { flowLPerMin: flow, respRatePerMin: rr + extraRate });
          if (base.kind !== 'ok' || moreFlow.kind !== 'ok' || faster.kind !== 'ok') {
            throw new Error('a valid low-flow input gave unknown');
          }
          expect(moreFlow.value.fio2.estimate).toBeGreaterThanOrEqual(base.value.fio2.estimate - 1e-12);
          expect(faster.value.fio2.estimate).toBeLessThanOrEqual(base.value.fio2.estimate + 1e-12);
        },
      ),
      { numRuns: 300 },
    );
  });

  describe('edge cases', () => {
    it('answers unknown, never a number, for a negative flow on any device', () => {
      for (const kind of DEVICE_KINDS) {
        expect(estimateDelivery(kind, { flowLPerMin: -1, setFio2Fraction: 0.4 }).kind).toBe('unknown');
      }
    });

    it('answers unknown for an FiO2 outside 0.21-1 on devices that read it', () => {
      const readers: readonly DeviceKind[] = ['venturi-mask', 'high-flow-nasal-cannula', 'tracheostomy-mask', 'cpap-niv'];
      for (const kind of readers) {
        expect(estimateDelivery(kind, { flowLPerMin: 10, setFio2Fraction: 1.5 }).kind).toBe('unknown');
      }
    });
  });
});
