import { notYetInEffectWarning } from '../policy/effective-from.js';
import { formatLoadProblem, loadPolicyAndCards, type FilePaths, type LoadedFiles, type LoadProblem } from '../config/load-files.js';
import type { Mode } from '../config/env-config.js';
import type { Logger } from '../log/logger.js';
import { snapshotOf, type PolicyHolder, type PolicySnapshot } from './policy-snapshot.js';
import { reloadConcerns, type ReloadConcern } from './reload-safety.js';

/**
 * Loading a new policy into the running service: read the policy file and the card wording again,
 * check them exactly as at start (loadPolicyAndCards), then check the change is safe for the running
 * mode (reload-safety.ts). Only when all pass is the new snapshot put in force, in one assignment;
 * otherwise the policy in force stays and every problem is logged, with its line and column, and
 * counted. The log never carries the file's text: problems are the validator's own messages.
 */

/** What asked for the reload: SIGHUP, the file watcher, or a direct call. */
export type ReloadTrigger = 'signal' | 'file-change' | 'manual';

export type ReloadOutcome =
  | {
      readonly kind: 'swapped';
      readonly previous: PolicySnapshot;
      readonly current: PolicySnapshot;
      /** Concerns that did not stop the reload (logged as warnings). */
      readonly concerns: readonly ReloadConcern[];
    }
  | {
      readonly kind: 'kept';
      /** `invalid`: the files did not pass the start-up checks; `unsafe`: valid, but not for this mode. */
      readonly reason: 'invalid' | 'unsafe';
      readonly current: PolicySnapshot;
      readonly problems: readonly LoadProblem[];
    };

export interface PolicyReloader {
  /**
   * Reloads and resolves with the outcome; never rejects. Reloads run one at a time; a request made
   * while one runs is served by one more run after it, so the last file written is the one read.
   */
  reload(trigger: ReloadTrigger): Promise<ReloadOutcome>;
  /** Reloads refused (invalid or unsafe) since start. */
  rejectedCount(): number;
}

export interface ReloaderDeps {
  readonly holder: PolicyHolder;
  readonly paths: FilePaths;
  readonly mode: Mode;
  readonly logger: Logger;
  readonly clock: () => Date;
  /** Defaults to loadPolicyAndCards, the start-up loader; tests may slow it to overlap reloads. */
  readonly load?: (paths: FilePaths) => Promise<LoadedFiles>;
}

/** The policy a swap replaced, as flat fields: the logger redacts any nested `id` (logger.ts). */
function previousOf(snapshot: PolicySnapshot): Record<string, string> {
  return {
    previousPolicyId: snapshot.policy.id,
    previousPolicyVersion: snapshot.policy.version,
    previousPolicyContentHash: snapshot.contentHash,
  };
}

/** One problem as a structured log entry: where (file, line, column, path), what, and the fix. */
function problemEntry(problem: LoadProblem): Record<string, unknown> {
  return Object.fromEntries(
    Object.entries({
      file: problem.file,
      line: problem.line,
      column: problem.column,
      path: problem.path,
      message: problem.message,
      fix: problem.fix,
    }).filter(([, value]) => value !== undefined),
  );
}

async function loadSafely(load: (paths: FilePaths) => Promise<LoadedFiles>, paths: FilePaths): Promise<LoadedFiles> {
  try {
    return await load(paths);
  } catch (error) {
    // The loader collects problems rather than throwing; this only keeps a fault from ending the process.
    const errorType = error instanceof Error ? error.name : typeof error;
    return { kind: 'invalid', problems: [{ file: paths.policyPath, path: '(file)', message: `could not be loaded (${errorType})` }] };
  }
}

export function createPolicyReloader(deps: ReloaderDeps): PolicyReloader {
  const load = deps.load ?? loadPolicyAndCards;
  let rejected = 0;
  let running: Promise<ReloadOutcome> | undefined;
  let queued: Promise<ReloadOutcome> | undefined;

  const keep = (
    trigger: ReloadTrigger,
    reason: 'invalid' | 'unsafe',
    problems: readonly LoadProblem[],
  ): ReloadOutcome => {
    rejected += 1;
    const current = deps.holder.current();
    deps.logger.error(
      {
        policyReload: 'rejected',
        trigger,
        reason,
        policyPath: deps.paths.policyPath,
        problemCount: problems.length,
        problems: problems.map(problemEntry),
        rejectedReloads: rejected,
        policyId: current.policy.id,
        policyVersion: current.policy.version,
        policyContentHash: current.contentHash,
      },
      `policy reload rejected (${reason === 'invalid' ? 'invalid file' : 'unsafe for this mode'}); the policy in force stays`,
    );
    return { kind: 'kept', reason, current, problems };
  };

  const runOnce = async (trigger: ReloadTrigger): Promise<ReloadOutcome> => {
    const files = await loadSafely(load, deps.paths);
    if (files.kind === 'invalid') {
      return keep(trigger, 'invalid', files.problems);
    }
    const next = snapshotOf(files, deps.clock());
    const concerns = reloadConcerns(deps.mode, deps.holder.current(), next);
    const refusals = concerns.filter((concern) => concern.level === 'error');
    if (refusals.length > 0) {
      return keep(
        trigger,
        'unsafe',
        refusals.map(({ path, message, fix }) => ({ file: deps.paths.policyPath, path, message, fix })),
      );
    }
    const previous = deps.holder.replace(next);
    const warnings = concerns.map(({ path, message, fix }) => ({ path, message, fix }));
    deps.logger[warnings.length > 0 ? 'warn' : 'info'](
      {
        policyReload: 'swapped',
        trigger,
        ...previousOf(previous),
        policyId: next.policy.id,
        policyVersion: next.policy.version,
        policyContentHash: next.contentHash,
        cardTemplates: next.templates.size,
        policyAcknowledgements: next.acknowledgements,
        policyWarnings: next.warnings.map(formatLoadProblem),
        ...(warnings.length === 0 ? {} : { reloadWarnings: warnings }),
        loadedAt: next.loadedAt,
      },
      `policy reloaded: ${previous.policy.id} v${previous.policy.version} -> ${next.policy.id} v${next.policy.version}`,
    );
    // As at start: a policy loaded before its effectiveFrom date is used, with a warning.
    const early = notYetInEffectWarning(next.policy, deps.clock());
    if (early !== undefined) {
      deps.logger.warn({ policyId: next.policy.id, effectiveFrom: next.policy.effectiveFrom }, early);
    }
    return { kind: 'swapped', previous, current: next, concerns };
  };

  const start = (trigger: ReloadTrigger): Promise<ReloadOutcome> => {
    const run = runOnce(trigger)
      .catch((error: unknown) => {
        const errorType = error instanceof Error ? error.name : typeof error;
        return keep(trigger, 'invalid', [{ file: deps.paths.policyPath, path: '(file)', message: `could not be reloaded (${errorType})` }]);
      })
      .finally(() => {
      if (running === run) {
        running = undefined;
      }
    });
    running = run;
    return run;
  };

  return {
    reload(trigger) {
      if (queued !== undefined) {
        // A run is already waiting to start; it will read the file as it is then, this request included.
        return queued;
      }
      if (running === undefined) {
        return start(trigger);
      }
      const next = running.then(() => {
        queued = undefined;
        return start(trigger);
      });
      queued = next;
      return next;
    },
    rejectedCount: () => rejected,
  };
}
