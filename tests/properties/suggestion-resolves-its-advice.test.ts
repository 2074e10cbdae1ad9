import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateScenario, ruleOf } from '../scenarios/support/run-scenario.js';
import { anyCase, toScenario } from './support/generated-orders.js';
import { suggestedUpdates } from './support/suggestions.js';

/**
 * Property (c): accepting a suggestion (its update action's resource replacing the draft, as a
 * CDS Hooks 2.0 client does) and checking again yields that advice no more (the same rule with the
 * same suggestion) and no critical card from a rule that was not critical before. Advice that
 * survives its own fix, or a fix that creates a new critical finding, is advice a clinician cannot
 * trust (common practice).
 */

describe('applying a suggestion resolves its advice', () => {
  it('holds over generated orders', () => {
    fc.assert(
      fc.property(anyCase, (g) => {
        const s = toScenario(g);
        const first = evaluateScenario(s);
        const draft = first.drafts[0];
        if (draft === undefined) return;
        const criticalBefore = new Set(first.cards.filter((c) => c.indicator === 'critical').map(ruleOf));
        for (const update of suggestedUpdates(first.cards, draft)) {
          const again = evaluateScenario(s, { drafts: [update.resource] });
          const repeated = again.cards.filter(
            (c) => ruleOf(c) === update.ruleId && (c.suggestions ?? []).some((sg) => sg.label === update.label),
          );
          const newCritical = again.cards.filter((c) => c.indicator === 'critical' && !criticalBefore.has(ruleOf(c)));
          expect(
            { repeated: repeated.map(ruleOf), newCritical: newCritical.map((c) => `${ruleOf(c)}: ${c.summary}`) },
            `after accepting ${update.ruleId}: '${update.label}'`,
          ).toStrictEqual({ repeated: [], newCritical: [] });
        }
      }),
      { seed: 20261103, numRuns: 200 },
    );
  });
});
