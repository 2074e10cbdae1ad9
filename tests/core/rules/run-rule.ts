import { buildAssessment } from '../../../src/core/assessment/build-assessment.js';
import type { Policy } from '../../../src/core/policy.js';
import type { Rule } from '../../../src/core/rules/support/rule-types.js';
import type { Facts, Finding, HookName } from '../../../src/core/types.js';
import { BTS, NOW } from '../facts-builder.js';

/** Runs one rule the way the engine does: assessment built once, then `evaluate`. */
export function runRule(
  rule: Rule,
  facts: Facts,
  options: { readonly policy?: Policy; readonly hook?: HookName; readonly now?: Date } = {},
): readonly Finding[] {
  const policy = options.policy ?? BTS;
  const now = options.now ?? NOW;
  const assessment = buildAssessment(facts, policy, { now });
  return rule.evaluate({ facts, policy, assessment, hook: options.hook ?? 'order-sign', now });
}

/** The single finding a rule is expected to make; fails the test when there is not exactly one. */
export function onlyFinding(findings: readonly Finding[]): Finding {
  if (findings.length !== 1 || findings[0] === undefined) {
    throw new Error(`expected exactly one finding, got ${findings.length}`);
  }
  return findings[0];
}
