import type { Mode } from '../config/env-config.js';
import type { PolicySnapshot } from './policy-snapshot.js';

/**
 * Checks a reload needs beyond the file's own validation: a file can be valid and still wrong to put
 * in force in the running mode. Pure.
 *
 * Production already runs an explicitly configured policy file (env-config.ts refuses to start
 * without one) and a reload re-reads that same path, so the bundled demo policy cannot come in by
 * default. What a reload adds is a previous policy to compare with: a changed file that keeps its id
 * and version would put two different policies under one name on cards and review pages, where
 * clinicians and auditors read the id and version, not the hash.
 */

export interface ReloadConcern {
  /** `error` refuses the reload; `warning` is logged and the reload goes ahead. */
  readonly level: 'error' | 'warning';
  /** Dot path in the policy file the concern is about. */
  readonly path: string;
  readonly message: string;
  readonly fix: string;
}

export function reloadConcerns(mode: Mode, previous: PolicySnapshot, next: PolicySnapshot): ReloadConcern[] {
  const concerns: ReloadConcern[] = [];
  const sameName = previous.policy.id === next.policy.id && previous.policy.version === next.policy.version;
  if (sameName && previous.contentHash !== next.contentHash) {
    concerns.push({
      // Production advises on real orders: every change to what judges them gets its own version.
      level: mode === 'production' ? 'error' : 'warning',
      path: 'version',
      message: `the file changed but still calls itself ${next.policy.id} v${next.policy.version}, so cards and review pages would show two different policies under one name`,
      fix: 'give the changed file a new version (and keep the old file) before reloading',
    });
  }
  return concerns;
}
