import { isDeepStrictEqual } from 'node:util';
import type { Policy } from '../core/policy.js';

/**
 * The parts of a policy that `extractFacts` (src/fhir/extract-facts.ts) reads: how fresh a reading
 * must be to count as current, and how far back readings are kept for a trend (and for patient-view,
 * the titration review's look-back). The rest of the policy (targets, thresholds, severities, devices,
 * units) is read by the engine only. Two policies that agree on these parts give the same facts for
 * the same record, so the replay reads each order's facts once and evaluates both policies from them.
 * tests/bulk/facts-policy-inputs.test.ts checks that `extractFacts` reads nothing else. Pure.
 */
export function factsPolicyInputs(policy: Policy): Readonly<Record<string, unknown>> {
  return {
    freshness: policy.freshness,
    oxygenNeedTrendMinutes: policy.thresholds.oxygenNeedTrendMinutes,
    titrationReviewLookbackHours: policy.titrationReview.lookbackHours,
  };
}

/** Whether facts read under `a` are the facts read under `b`. Compared once per run, not per order. */
export function sameFactsInputs(a: Policy, b: Policy): boolean {
  return a === b || isDeepStrictEqual(factsPolicyInputs(a), factsPolicyInputs(b));
}
