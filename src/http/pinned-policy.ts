import { oncePerObject } from '../core/once-per-object.js';
import type { Response } from 'express';
import type { PolicyHolder, PolicySnapshot } from '../live-policy/policy-snapshot.js';

/**
 * Each request takes the policy in force when it arrives, once, and keeps it to the end: a reload
 * while it waits on a FHIR server or the store changes the next request, never this one. Mounted
 * right after the request context (request-start.ts), before anything that reads the policy.
 */

const PINNED_KEY = 'oxygenCheckerPolicy';

export function pinPolicy(holder: PolicyHolder): (res: Response) => void {
  return (res) => {
    res.locals[PINNED_KEY] = holder.current();
  };
}

/** The snapshot this request was given by `pinPolicy`. */
export function pinnedPolicy(res: Response): PolicySnapshot {
  const snapshot = res.locals[PINNED_KEY] as PolicySnapshot | undefined;
  if (snapshot === undefined) {
    throw new Error('pinPolicy middleware must run first');
  }
  return snapshot;
}

/**
 * `build` once per snapshot, remembered while the snapshot lives: the handlers built over one
 * snapshot close over its policy, hash and wording only, so they cannot mix two policies.
 */
export function perSnapshot<T extends object>(build: (snapshot: PolicySnapshot) => T): (snapshot: PolicySnapshot) => T {
  return oncePerObject(build);
}
