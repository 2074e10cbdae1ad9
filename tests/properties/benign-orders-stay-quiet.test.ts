import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateScenario, ruleOf } from '../scenarios/support/run-scenario.js';
import { benignCase, toScenario } from './support/generated-orders.js';

/**
 * Property (d): a benign order raises no warning or critical card. An adult with no risk data, the
 * policy's standard range ordered (94-98 %, BTS 2017 Tables 1-3), SpO2 within it, on a nasal cannula
 * at 1-4 L/min or a 24-35 % Venturi at its usual flow, breathing 12-20/min: nothing a consultant
 * would change. Alert fatigue is a harm (common practice).
 */

describe('benign generated orders stay quiet', () => {
  it('raise no warning or critical card', () => {
    fc.assert(
      fc.property(benignCase, (g) => {
        const { cards } = evaluateScenario(toScenario(g));
        const loud = cards.filter((c) => c.indicator !== 'info').map((c) => `${c.indicator} ${ruleOf(c)}: ${c.summary}`);
        expect(loud).toStrictEqual([]);
      }),
      { seed: 20261104, numRuns: 300 },
    );
  });
});
