import type { Computation, Finding, Indicator, OrderChange } from '../../types.js';
import type { Rule } from './rule-types.js';

/**
 * Each key once, where it first appears. A finding cites a handful of sources, so a scan of the list
 * costs less than a Set built and spread for every finding.
 */
export function firstOfEach(keys: readonly string[]): string[] {
  return keys.filter((key, index) => keys.indexOf(key) === index);
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
