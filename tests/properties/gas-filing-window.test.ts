import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateScenario } from '../scenarios/support/run-scenario.js';
import { adviceOf } from './support/advice.js';
import { anyCase, toScenario } from './support/generated-orders.js';

/**
 * A gas's advice does not change when its results' filing times move within the grouping window
 * (issue 6 class 1; policy freshness.bloodGasGroupingMinutes 10, common practice): the four results
 * of one sample filed together, filed up to 3 min apart each (9 min in all), or filed with the same
 * effective time and differing `issued` times give the same cards.
 */

const withGas = anyCase.filter((g) => g.gas !== undefined);
const filing = fc.oneof(
  fc.record({ filing: fc.constant('spread' as const), spreadSeconds: fc.integer({ min: 5, max: 180 }) }),
  fc.record({ filing: fc.constant('issued' as const), spreadSeconds: fc.integer({ min: 5, max: 600 }) }),
);

describe('gas advice does not depend on filing times within the grouping window', () => {
  it('holds over generated orders and filings', () => {
    fc.assert(
      fc.property(withGas, filing, (g, gasFiling) => {
        const together = evaluateScenario(toScenario(g, { gasFiling: { filing: 'together', spreadSeconds: 0 } }));
        const apart = evaluateScenario(toScenario(g, { gasFiling }));
        expect(adviceOf(apart.cards)).toStrictEqual(adviceOf(together.cards));
      }),
      { seed: 20261105, numRuns: 200 },
    );
  });
});
