import { oncePerObject } from './once-per-object.js';
import { buildAssessment } from './assessment/build-assessment.js';
import type { Assessment } from './assessment/types.js';
import { policyForEncounter } from './assessment/unit-targets.js';
import type { Policy } from './policy.js';
import { RULES } from './rules/index.js';
import { changeUsesStock } from './devices/catalogue.js';
import { changeLowersOxygen, reasonNotToLowerOxygen } from './rules/support/oxygen-lowering.js';
import type { Rule, RuleContext } from './rules/support/rule-types.js';
import { sameFinding } from './same-finding.js';
import type { Facts, Finding, HookName, Indicator, OxygenOrder } from './types.js';

export type { Rule, RuleContext } from './rules/support/rule-types.js';

const INDICATOR_RANK: Readonly<Record<Indicator, number>> = { critical: 0, warning: 1, info: 2 };

export interface Evaluation {
  /** The assessment of the first subject order (or of the patient alone when no order is a subject). */
  readonly assessment: Assessment;
  /** One assessment per subject order, in draft order; `assessments[0]` is `assessment`. */
  readonly assessments: readonly Assessment[];
  /** Critical first, then warning, then info; registry order within an indicator. */
  readonly findings: readonly Finding[];
}

/**
 * One finding per rule about the patient (no order reference), whichever subject order's run found it
 * first: two drafts signed together see the same patient, and a patient-level finding whose values
 * differ only by the order's wording is one fact. Called on findings sorted critical first, so the one
 * kept is the most severe. Findings about an order stay one per order.
 */
export function oncePerPatient(findings: readonly Finding[]): Finding[] {
  const seen = new Set<string>();
  return findings.filter((finding) => {
    if (finding.orderReference !== undefined) {
      return true;
    }
    if (seen.has(finding.ruleId)) {
      return false;
    }
    seen.add(finding.ruleId);
    return true;
  });
}

/** A rule as a policy runs it: the rule and the indicator the policy gives its findings, if it overrides it. */
interface PlannedRule {
  readonly rule: Rule;
  readonly severity: Indicator | undefined;
}

/** The rules a policy runs for one hook: for adults, and below the policy's minimum age. */
interface HookPlan {
  readonly adults: readonly PlannedRule[];
  readonly childOnly: readonly PlannedRule[];
}

const HOOKS: readonly HookName[] = ['order-sign', 'order-select', 'patient-view'];

/**
 * Which rules run for each hook under a policy, in registry order, with each one's severity
 * override: made once per policy object rather than re-decided rule by rule on every call. A policy
 * is frozen once loaded, and a unit's effective policy is one object per unit (unit-targets.ts), so
 * this is made once per policy and unit. The guidelines encoded are for adults: below the policy's
 * minimum age only the rules that hold for anyone run (data quality, order keeping, and the card
 * saying local paediatric policy applies).
 */
const hookPlansOf = oncePerObject((policy: Policy): ReadonlyMap<HookName, HookPlan> => {
  const disabled = new Set(policy.disabledRules);
  return new Map(
    HOOKS.map((hook) => {
      const adults = RULES.filter((rule) => rule.hooks.includes(hook) && !disabled.has(rule.id)).map(
        (rule): PlannedRule => ({ rule, severity: policy.severity[rule.id] }),
      );
      return [hook, { adults, childOnly: adults.filter(({ rule }) => (rule.appliesTo ?? 'adults') !== 'adults') }];
    }),
  );
});

/**
 * Adds `finding` to `kept` unless the same finding is already there. A check keeps a handful of
 * findings, and `sameFinding` tells most apart by rule id at once, so a scan costs less than grouping
 * them under a key string made for every finding.
 */
function keepOnce(kept: Finding[], finding: Finding): void {
  if (!kept.some((other) => sameFinding(other, finding))) {
    kept.push(finding);
  }
}

function runRules(
  facts: Facts,
  policy: Policy,
  assessment: Assessment,
  options: { readonly hook: HookName; readonly now: Date },
): Finding[] {
  const plan = hookPlansOf(policy).get(options.hook);
  const findings: Finding[] = [];
  if (plan === undefined) {
    return findings;
  }
  const rules = assessment.population.kind === 'below-minimum-age' ? plan.childOnly : plan.adults;
  // Whether no change may lower the oxygen, worked out at the first finding that offers a change.
  let noLowering: boolean | undefined;
  // Every rule reads the same context (read-only), so it is made once per assessment, not per rule.
  const context: RuleContext = { facts, policy, assessment, hook: options.hook, now: options.now };
  for (const { rule, severity } of rules) {
    for (const made of rule.evaluate(context)) {
      // One safety interlock for every rule: no one-click change lowers the oxygen while the patient
      // may be tiring or is below target (support/oxygen-lowering.ts). The card's advice stays.
      // And none offers a device or Venturi valve the hospital does not stock (policy `devices`).
      if (made.change !== undefined) {
        noLowering ??= reasonNotToLowerOxygen(assessment) !== undefined;
      }
      const finding =
        made.change !== undefined &&
        ((noLowering === true && changeLowersOxygen(made.change, assessment, facts)) ||
          !changeUsesStock(made.change, policy.devices))
          ? { ...made, change: undefined }
          : made;
      findings.push(severity === undefined ? finding : { ...finding, indicator: severity });
    }
  }
  return findings;
}

/**
 * Checks the subject oxygen order(s) in `facts` against `policy` for one hook call. Pure.
 *
 * Each subject order gets its own assessment and its own run of the rules (a draft may sign two
 * oxygen orders at once); findings about the patient rather than an order come out once. The engine
 * applies `policy.disabledRules` and `policy.severity` to every rule alike and never looks at which
 * rule it is running; below `population.minimumAgeYears` it runs only rules whose `appliesTo` is
 * `all-ages`. Findings are ordered critical → warning → info, registry order within each.
 *
 * The unit override for the encounter's location (policy `units`) is resolved here, once: the
 * assessment and every rule read the effective policy, so no rule can see one unit's ranges while
 * the target selection sees another's.
 */
export function evaluateOrder(
  facts: Facts,
  basePolicy: Policy,
  options: { readonly hook: HookName; readonly now: Date },
): Evaluation {
  const { policy, unit } = policyForEncounter(basePolicy, facts);
  const subjects: readonly (OxygenOrder | undefined)[] = facts.orders.filter((o) => o.isSubject);
  const assessments = (subjects.length === 0 ? [undefined] : subjects).map((order) =>
    buildAssessment(facts, policy, { now: options.now, order, unit }),
  );
  const findings: Finding[] = [];
  for (const assessment of assessments) {
    for (const finding of runRules(facts, policy, assessment, options)) {
      keepOnce(findings, finding);
    }
  }
  // Array.prototype.sort is stable, so registry order survives within each indicator.
  findings.sort((a, b) => INDICATOR_RANK[a.indicator] - INDICATOR_RANK[b.indicator]);
  const first = assessments[0];
  if (first === undefined) {
    throw new Error('evaluateOrder: at least one assessment is always built');
  }
  return { assessment: first, assessments, findings: oncePerPatient(findings) };
}
