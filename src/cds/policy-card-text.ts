import type { OverrideReasonText, Policy } from '../core/policy.js';
import { citedGuidelineKey } from '../core/rules/support/cited-guideline.js';
import { GUIDELINE_TOPICS } from '../policy/card-sections-schema.js';
import type { CardTemplate } from './card-templates.js';
import { oncePerPolicyAndKey } from './once-per-policy.js';

/**
 * What a card takes from the policy rather than from its rule: the guideline it cites and the
 * override reasons it offers. A template never names a guideline in fixed text; it writes
 * `{{guideline}}` (the guideline the policy names for the rule, else the policy's primary),
 * `{{guidelines}}` (every guideline the policy follows) or `{{<topic>Guideline}}` (e.g.
 * `{{ventilationGuideline}}`, the guideline the policy names for that topic, else the primary). Pure.
 */

/** Placeholders the card builder fills from the policy; a rule's own values never use these names. */
export const POLICY_PLACEHOLDERS: readonly string[] = [
  'guideline',
  'guidelines',
  ...GUIDELINE_TOPICS.map((topic) => `${topic}Guideline`),
];

function labelOf(policy: Policy, key: string): string {
  return policy.references[key]?.label ?? key;
}

/** The reference key a rule's `{{guideline}}` cites: the policy's citation for the rule, else the primary. */
export { citedGuidelineKey };

const valuesOnce = oncePerPolicyAndKey((policy, ruleId) => Object.freeze(buildPolicyCardValues(policy, ruleId)));

/**
 * The values of {@link POLICY_PLACEHOLDERS} for one rule's card (labels; the links are in the card's
 * sources). Built once per policy and rule, and frozen, as every card of that rule shows the same.
 */
export function policyCardValues(policy: Policy, ruleId: string): Readonly<Record<string, string>> {
  return valuesOnce(policy, ruleId);
}

function buildPolicyCardValues(policy: Policy, ruleId: string): Record<string, string> {
  const values: Record<string, string> = {
    guideline: labelOf(policy, citedGuidelineKey(policy, ruleId)),
    guidelines: policy.clinicalBasis.guidelineKeys.map((key) => labelOf(policy, key)).join(', '),
  };
  for (const topic of GUIDELINE_TOPICS) {
    values[`${topic}Guideline`] = labelOf(policy, policy.clinicalBasis.topicCitations[topic] ?? policy.basisKey);
  }
  return values;
}

/**
 * The override reasons a rule's card offers (docs/policy.md, "override reasons"): with `merge: add`,
 * the card file's, then the policy's `allCards`, then its `byRule` entry, a code given again taking
 * the later display in the earlier place; with `merge: replace`, the policy's `allCards` and `byRule`
 * entry instead of the card file's, when the policy gives any for the rule.
 */
export function offeredOverrideReasons(
  policy: Policy,
  ruleId: string,
  template: Pick<CardTemplate, 'overrideReasons'> | undefined,
): readonly OverrideReasonText[] {
  const fromPolicy = [...policy.overrideReasons.allCards, ...(policy.overrideReasons.byRule[ruleId] ?? [])];
  const fromCard = template?.overrideReasons ?? [];
  const all = policy.overrideReasons.merge === 'replace' && fromPolicy.length > 0 ? fromPolicy : [...fromCard, ...fromPolicy];
  const byCode = new Map<string, OverrideReasonText>();
  for (const reason of all) {
    byCode.set(reason.code, { code: reason.code, display: reason.display });
  }
  return [...byCode.values()];
}
