import type { Computation, Finding, Indicator, OrderChange } from '../../types.js';
import type { Rule } from './rule-types.js';

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
    sourceKeys: [...new Set(parts.sourceKeys)],
    change: parts.change,
  };
}
