import type { Card } from '../../../src/cds/schemas.js';
import { ruleOf } from '../../scenarios/support/run-scenario.js';

/**
 * The advice of a response as a clinician acts on it: each card's indicator and rule id with the
 * labels of its suggestions, sorted. Summaries are left out because they carry times ("40 min ago").
 */
export function adviceOf(cards: readonly Card[]): readonly string[] {
  return cards
    .map((c) => `${c.indicator} ${ruleOf(c)}${(c.suggestions ?? []).map((s) => ` [${s.label}]`).join('')}`)
    .sort();
}
