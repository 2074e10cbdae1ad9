import type { Policy } from '../policy.js';
import type { Facts } from '../types.js';
import type { Assessment } from './types.js';

/** What a value derived from one assessment may read besides it. */
export interface AssessmentInputs {
  readonly assessment: Assessment;
  readonly facts: Facts;
  readonly policy: Policy;
  readonly now: Date;
}

/**
 * `build(inputs)`, built once for each assessment and served again while the facts, policy and clock
 * are the same objects and instant. For values that several rules derive from one assessment (the
 * titration review, an escalated-support failure): the engine hands every rule of a run the same
 * assessment, facts, policy and clock, so the value is built once per run. Any other caller with
 * other inputs gets a fresh build. The value must be read-only, as everything an assessment holds is.
 */
export function oncePerAssessment<T>(build: (inputs: AssessmentInputs) => T): (inputs: AssessmentInputs) => T {
  const built = new WeakMap<
    Assessment,
    { readonly facts: Facts; readonly policy: Policy; readonly nowMs: number; readonly value: T }
  >();
  return (inputs) => {
    const nowMs = inputs.now.getTime();
    const entry = built.get(inputs.assessment);
    if (entry !== undefined && entry.facts === inputs.facts && entry.policy === inputs.policy && entry.nowMs === nowMs) {
      return entry.value;
    }
    const value = build(inputs);
    built.set(inputs.assessment, { facts: inputs.facts, policy: inputs.policy, nowMs, value });
    return value;
  };
}
