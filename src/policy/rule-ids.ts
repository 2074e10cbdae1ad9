import { RULES } from '../core/rules/index.js';
import type { Indicator } from '../core/types.js';

/**
 * The rule ids a policy may name, read from the registry, and the ids that were retired. Rule ids are
 * never reused, so a retired id in a policy is an old file, not a new rule: it gets its own message
 * naming what replaced it. This list mirrors the "Retired rule ids" table of docs/clinical-basis.md
 * (tests/policy/rule-ids.test.ts keeps the two the same).
 */
export const RETIRED_RULE_IDS: Readonly<Record<string, { readonly replacedBy: string }>> = {
  'pregnancy-oxygen': { replacedBy: 'oxygen-without-hypoxaemia' },
  'sickle-cell-oxygen': { replacedBy: 'oxygen-without-hypoxaemia' },
};

/**
 * Rules whose default indicator is not critical but which give a critical card in some situations
 * (SpO2 far below target, a lower-oxygen order in current hypercapnia, CO poisoning with a target...).
 * A severity entry replaces the indicator of every card a rule makes, so setting one of these to
 * `warning` or `info`, or switching it off, hides those critical cards. Kept equal to the rules that
 * write a critical indicator by tests/policy/rule-ids.test.ts.
 */
export const SOMETIMES_CRITICAL_RULE_IDS: readonly string[] = [
  'carbon-monoxide-oximetry',
  'high-oxygen-requirement',
  'order-gives-less-oxygen',
  'spo2-below-target',
  'target-above-hypercapnic-range',
  'target-one-sided',
  'time-below-target',
  'uncontrolled-oxygen-at-risk',
];

const DEFAULT_INDICATOR: ReadonlyMap<string, Indicator> = new Map(RULES.map((rule) => [rule.id, rule.defaultIndicator]));

export function defaultIndicatorOf(ruleId: string): Indicator | undefined {
  return DEFAULT_INDICATOR.get(ruleId);
}

export function registeredRuleIds(): readonly string[] {
  return [...DEFAULT_INDICATOR.keys()];
}

/** Edit distance, for "did you mean": a misspelt id is usually one or two keystrokes away. */
function editDistance(a: string, b: string): number {
  let previous = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i += 1) {
    const current = [i];
    for (let j = 1; j <= b.length; j += 1) {
      const substitution = (previous[j - 1] ?? 0) + (a[i - 1] === b[j - 1] ? 0 : 1);
      current.push(Math.min((previous[j] ?? 0) + 1, (current[j - 1] ?? 0) + 1, substitution));
    }
    previous = current;
  }
  return previous[b.length] ?? 0;
}

/**
 * The nearest of `candidates` to `word`, when it is close enough to be a slip (a third of its length),
 * or the one candidate that contains `word` (`criticalSpo2Below` for `criticalSpo2BelowPercent`).
 */
export function nearest(word: string, candidates: readonly string[]): string | undefined {
  const extended = candidates.filter((c) => c.includes(word) && word.length >= 4);
  if (extended.length === 1) return extended[0];
  let best: { candidate: string; distance: number } | undefined;
  for (const candidate of candidates) {
    const distance = editDistance(word, candidate);
    if (best === undefined || distance < best.distance) best = { candidate, distance };
  }
  return best !== undefined && best.distance <= Math.max(2, Math.floor(word.length / 3)) ? best.candidate : undefined;
}
