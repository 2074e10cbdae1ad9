import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { deviceTier, tierRank } from '../../src/core/devices/device-tier.js';
import { onRecord } from '../scenarios/support/fhir.js';
import { evaluateScenario } from '../scenarios/support/run-scenario.js';
import { scenario } from '../scenarios/support/scenario.js';
import { anyCase, isBelowAnyTarget, toScenario } from './support/generated-orders.js';

/**
 * Property: for a generated patient below target on some oxygen (an active order on record), any
 * draft order on a lower tier of support (devices/device-tier.ts: conventional oxygen < high flow <
 * CPAP/NIV; FLORALI, Frat et al. NEJM 2015, from memory; common practice) raises the order-gives-less-oxygen card. Below the target range the patient needs more
 * oxygen and review, never less (BTS 2017 summary, check-values.md §1a); oxygen is weaned only when
 * SpO2 is in or above the range (BTS 2017, from memory). Invented Larkspur Bay patients.
 */

const RULE_ID = 'order-gives-less-oxygen';
const rank = (device: Parameters<typeof deviceTier>[0]): number => tierRank(deviceTier(device));

// A reservoir mask and a simple face mask share the conventional tier and their FiO2 ranges overlap
// (check-values.md §2a), so that step is judged by FiO2 in the rule's own tests, not here.

describe('an order on a lower tier while below target is flagged', () => {
  it('holds over generated patients and orders', () => {
    const running = anyCase.filter((g) => isBelowAnyTarget(g) && rank(g.device) > 0);
    fc.assert(
      fc.property(running, anyCase, (g, other) => {
        fc.pre(rank(other.device) < rank(g.device));
        // The same patient, target and readings; only the device and its settings differ.
        const drafted = toScenario({ ...g, device: other.device, flowLPerMin: other.flowLPerMin, fio2Percent: other.fio2Percent, resource: other.resource });
        const onIt = toScenario(g);
        const combined = scenario({
          id: 'generated-lower-tier',
          story: 'generated',
          pov: 'ward doctor',
          topic: 'property',
          age: g.age,
          build: () => {
            const runningOrder = onIt.build().drafts[0];
            const built = drafted.build();
            return { drafts: built.drafts, record: [...(runningOrder === undefined ? [] : [onRecord(runningOrder, 240)]), ...(built.record ?? [])] };
          },
          expect: [],
        });
        const { cards } = evaluateScenario(combined);
        const ids = cards.map((card) => card.source.topic?.code);
        expect(ids, `${other.device} drafted for a patient on ${g.device}, SpO2 ${g.spo2Percent} %`).toContain(RULE_ID);
      }),
      { seed: 20261204, numRuns: 150 },
    );
  });
});
