import type { CardTemplates } from '../cds/card-templates.js';
import type { LoadedFiles, LoadProblem } from '../config/load-files.js';
import type { Policy } from '../core/policy.js';
import type { PolicyAcknowledgement } from '../policy/parse-policy.js';

/**
 * The policy the running service advises with: everything read from the policy file and the card
 * wording, as one frozen value. It is replaced whole, never edited, so a request that took it at its
 * start uses one policy throughout: the hash on its cards, its audit records and its log line all
 * name the policy that produced its cards, even when a reload lands while it waits on a FHIR server.
 */
export interface PolicySnapshot {
  readonly policy: Policy;
  /** sha256 (hex) of the policy file's bytes (load-files.ts). */
  readonly contentHash: string;
  /** The card wording loaded with this policy (cards/, or the policy's own wording folder). */
  readonly templates: CardTemplates;
  /** Critical rules the file switches off or lowers, with the committee's recorded reasons. */
  readonly acknowledgements: readonly PolicyAcknowledgement[];
  /** Problems that did not stop the file being used. */
  readonly warnings: readonly LoadProblem[];
  /** When this snapshot was read and checked (ISO 8601, UTC). */
  readonly loadedAt: string;
}

/** The current snapshot, swapped as one reference. */
export interface PolicyHolder {
  /** The snapshot in force now. Read it once per request and keep it. */
  current(): PolicySnapshot;
  /** Puts `next` in force and returns the snapshot it replaced. */
  replace(next: PolicySnapshot): PolicySnapshot;
}

/** A snapshot of files that loaded cleanly (loadPolicyAndCards). */
export function snapshotOf(files: Extract<LoadedFiles, { kind: 'ok' }>, loadedAt: Date): PolicySnapshot {
  return Object.freeze({
    policy: files.policy,
    contentHash: files.policyContentHash,
    templates: files.templates,
    acknowledgements: Object.freeze([...files.policyAcknowledgements]),
    warnings: Object.freeze([...files.policyWarnings]),
    loadedAt: loadedAt.toISOString(),
  });
}

/**
 * One reference, assigned in one statement: JavaScript runs one callback at a time, so a reader
 * sees the old snapshot or the new one, never part of each. Nothing here awaits.
 */
export function createPolicyHolder(initial: PolicySnapshot): PolicyHolder {
  let snapshot = initial;
  return {
    current: () => snapshot,
    replace(next) {
      const previous = snapshot;
      snapshot = next;
      return previous;
    },
  };
}
