import type { Policy } from '../../policy.js';

/**
 * The guideline a rule's advice cites, from the policy's clinical basis: the one the policy names for
 * the rule (`clinicalBasis.ruleCitations`), else its primary guideline (`basis`). Rules and card files
 * never name a guideline in fixed text, so a policy based on another guideline is not made to quote
 * one it does not follow (docs/policy.md).
 */
export function citedGuidelineKey(policy: Policy, ruleId: string): string {
  return policy.clinicalBasis.ruleCitations[ruleId] ?? policy.basisKey;
}

/** The label of {@link citedGuidelineKey}, e.g. "BTS 2017". */
export function citedGuidelineLabel(policy: Policy, ruleId: string): string {
  const key = citedGuidelineKey(policy, ruleId);
  return policy.references[key]?.label ?? key;
}
