import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateScenario } from '../scenarios/support/run-scenario.js';
import { anyCase, toScenario } from './support/generated-orders.js';
import { suggestedUpdates } from './support/suggestions.js';

/**
 * After a text rewrite every number and sentence outside the changed span is unchanged (issue 6
 * class 6): a contingency instruction in the order words ("if SpO2 below 85% call doctor, increase
 * to 6 L/min") survives every suggestion word for word, whatever flow, target or device it changes.
 * A suggestion that rewrote it would change an instruction nobody asked to change (common practice).
 */

const contingency = fc.oneof(
  fc.tuple(fc.integer({ min: 80, max: 90 }), fc.integer({ min: 1, max: 15 })).map(([s, f]) => `If SpO2 below ${s}% call doctor, increase to ${f} L/min`),
  fc.integer({ min: 1, max: 6 }).map((f) => `May increase to ${f} L/min overnight`),
  fc.integer({ min: 20, max: 30 }).map((rr) => `Call outreach if RR above ${rr}/min or SpO2 falls`),
  fc.constantFrom('Humidify if used over 4 hours', 'Wean as tolerated, keep target'),
);

describe('a suggestion changes only what it names', () => {
  it('keeps a contingency instruction word for word', () => {
    fc.assert(
      fc.property(anyCase, contingency, (g, extraWords) => {
        const { cards, drafts } = evaluateScenario(toScenario(g, { extraWords }));
        const draft = drafts[0];
        const lost = (draft === undefined ? [] : suggestedUpdates(cards, draft))
          .filter((u) => !JSON.stringify(u.resource).includes(extraWords))
          .map((u) => `${u.ruleId}: '${u.label}'`);
        expect(lost, `instruction '${extraWords}'`).toStrictEqual([]);
      }),
      { seed: 20261107, numRuns: 200 },
    );
  });
});
