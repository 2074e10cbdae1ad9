import { oncePerObject } from '../core/once-per-object.js';
import type { Policy } from '../core/policy.js';

/**
 * What a card takes from the policy alone (its source label, override reasons, cautions, guideline
 * labels) is the same for every card and every call under one policy, so it is built once per policy
 * snapshot. A parsed policy is deep-frozen (src/policy/parse-policy.ts) and a reload makes a new one,
 * so a WeakMap keyed on the policy object can never serve a stale value, and drops its entries with
 * the snapshot.
 */

/** `build(policy)`, built once for each policy object. */
export function oncePerPolicy<T>(build: (policy: Policy) => T): (policy: Policy) => T {
  return oncePerObject(build);
}

/**
 * `build(policy, key)`, built once for each policy object and key. The keys are few and fixed by the
 * service (rule ids, the source keys a rule cites), so each policy's map stays small.
 */
export function oncePerPolicyAndKey<T>(build: (policy: Policy, key: string) => T): (policy: Policy, key: string) => T {
  const perPolicy = oncePerPolicy(() => new Map<string, T>());
  return (policy, key) => {
    const built = perPolicy(policy);
    if (!built.has(key)) {
      built.set(key, build(policy, key));
    }
    return built.get(key) as T;
  };
}
