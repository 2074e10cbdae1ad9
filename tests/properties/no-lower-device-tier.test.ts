import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DEVICE_TIER } from '../scenarios/support/oxygen-level.js';
import { evaluateScenario } from '../scenarios/support/run-scenario.js';
import { anyCase, hasHypercapnicAcidosis, type GeneratedCase, toScenario } from './support/generated-orders.js';
import { describeUpdate, suggestedUpdates, type SuggestedUpdate } from './support/suggestions.js';

/**
 * Property (b): no suggestion offers a lower tier of device than the order gives (tiers in
 * oxygen-level.ts: ward devices < reservoir mask < high flow < CPAP/NIV). Issue 6 class 3: never
 * offer a reservoir mask to a patient on high flow or NIV.
 *
 * The one allowed step down: BTS 2017 Table 4 replaces an uncontrolled reservoir mask with a
 * controlled Venturi mask for a patient at risk of hypercapnic respiratory failure. That is a change
 * of control, safe only while SpO2 is at or above 88 % and there is no hypercapnic acidosis, so only
 * then is it allowed here.
 */

function allowedStepDown(u: SuggestedUpdate, g: GeneratedCase): boolean {
  const atRisk = g.risk !== 'none' || (g.gas !== undefined && g.gas.pco2Kpa >= 6);
  return (
    u.before.device === 'reservoir-mask' &&
    u.after.device === 'venturi-mask' &&
    atRisk &&
    g.spo2Percent >= 88 &&
    !hasHypercapnicAcidosis(g)
  );
}

describe('no suggestion offers a lower tier of device', () => {
  it('holds over generated orders', () => {
    fc.assert(
      fc.property(anyCase, (g) => {
        const { cards, drafts } = evaluateScenario(toScenario(g));
        const draft = drafts[0];
        const lower = (draft === undefined ? [] : suggestedUpdates(cards, draft)).filter(
          (u) =>
            u.before.device !== undefined &&
            u.after.device !== undefined &&
            DEVICE_TIER[u.after.device] < DEVICE_TIER[u.before.device] &&
            !allowedStepDown(u, g),
        );
        expect(lower.map(describeUpdate), `SpO2 ${g.spo2Percent} %, risk ${g.risk}`).toStrictEqual([]);
      }),
      { seed: 20261102, numRuns: 300 },
    );
  });
});
