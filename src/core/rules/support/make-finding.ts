import type { Computation, Finding, Indicator, OrderChange } from '../../types.js';
import type { Rule } from './rule-types.js';

/**
 * Each key once, in the order first given (as `[...new Set(keys)]` gives them); the list itself when
 * nothing repeats, as in most findings, rather than a Set and a new array for every finding.
 */
function firstOfEach(keys: readonly string[]): readonly string[] {
  // Plain comparisons: a finding names a few sources, too few for a Set to pay for itself.
  let unique: string[] | undefined;
  for (let i = 0; i < keys.length; i += 1) {
    const key = keys[i] as string;
    let seen = false;
    for (let j = 0; j < i && !seen; j += 1) {
      seen = keys[j] === key;
    }
    if (seen) {
      unique ??= keys.slice(0, i);
    } else if (unique !== undefined) {
      unique.push(key);
    }
  }
  return unique ?? keys;
}

/** Builds a Finding for `rule`, so id and version always match the rule that made it. */
export function makeFinding(
  rule: Pick<Rule, 'id' | 'version' | 'defaultIndicator'>,
  parts: {
    readonly indicator?: Indicator;
    readonly orderReference: string | undefined;
    readonly values: Readonly<Record<string, string>>;
    readonly computations?: readonly Computation[];
    readonly sourceKeys: readonly string[];
    readonly change?: OrderChange;
  },
): Finding {
  return {
    ruleId: rule.id,
    ruleVersion: rule.version,
    indicator: parts.indicator ?? rule.defaultIndicator,
    orderReference: parts.orderReference,
    values: parts.values,
    computations: parts.computations ?? [],
    sourceKeys: firstOfEach(parts.sourceKeys),
    change: parts.change,
  };
}
