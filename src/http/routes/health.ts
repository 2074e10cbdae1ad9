import type { PolicyHolder } from '../../live-policy/policy-snapshot.js';
import type { Store, StoreReadiness } from '../../store/store.js';
import type { RouteHandler, RouteResult } from '../respond.js';

/** `GET /healthz`: liveness only. It reads nothing and says nothing about patients or policy. */
export const healthHandler: RouteHandler = () => ({ status: 200, body: { status: 'ok' } });

/** How long /readyz waits for the store before it answers 503: a probe must not hang with it. */
export const READINESS_STORE_TIMEOUT_MS = 1000;

export interface ReadinessDeps {
  readonly policy: PolicyHolder;
  readonly store: Store;
  /** Defaults to READINESS_STORE_TIMEOUT_MS. */
  readonly storeTimeoutMs?: number;
}

/** The checks /readyz makes, in order; the first that fails is named in the 503. */
export type ReadinessCheck = 'policy' | 'store' | 'schema';

type StoreAnswer =
  | { readonly kind: 'answered'; readonly readiness: StoreReadiness }
  | { readonly kind: 'failed' }
  | { readonly kind: 'timed-out' };

/** The store's answer, or why there was none within `timeoutMs`; never rejects, never outlives the timeout. */
function askStore(store: Store, timeoutMs: number): Promise<StoreAnswer> {
  return new Promise<StoreAnswer>((resolve) => {
    const timer = setTimeout(() => {
      resolve({ kind: 'timed-out' });
    }, timeoutMs);
    timer.unref();
    let asked: Promise<StoreReadiness>;
    try {
      asked = store.readiness();
    } catch {
      asked = Promise.reject(new Error('store: readiness threw'));
    }
    asked.then(
      (readiness) => {
        clearTimeout(timer);
        resolve({ kind: 'answered', readiness });
      },
      () => {
        clearTimeout(timer);
        resolve({ kind: 'failed' });
      },
    );
  });
}

function notReady(failed: ReadinessCheck, reason: string, extra: Readonly<Record<string, number>> = {}): RouteResult {
  return {
    status: 503,
    body: { status: 'not-ready', failed, reason, ...extra },
  };
}

/**
 * `GET /readyz`: whether this instance should be sent traffic. Ready when a policy is in force, the
 * store answers within `storeTimeoutMs`, and the store's schema is the version this release writes
 * (behind means the migrations did not run; ahead means a newer release migrated it). The 503 names
 * the failed check in fixed words: no error text, no database address, nothing about patients.
 */
export function readinessHandler(deps: ReadinessDeps): RouteHandler {
  const timeoutMs = deps.storeTimeoutMs ?? READINESS_STORE_TIMEOUT_MS;
  return async () => {
    const snapshot = deps.policy.current();
    if (snapshot.contentHash === '' || snapshot.policy.id === '') {
      return notReady('policy', 'no policy is in force');
    }
    const answer = await askStore(deps.store, timeoutMs);
    if (answer.kind === 'timed-out') {
      return notReady('store', `the store did not answer within ${String(timeoutMs)} ms`);
    }
    if (answer.kind === 'failed') {
      return notReady('store', 'the store could not be reached');
    }
    const { schemaVersion, latestSchemaVersion } = answer.readiness;
    if (schemaVersion !== latestSchemaVersion) {
      const reason =
        schemaVersion < latestSchemaVersion ? 'the schema is behind this release' : 'the schema is newer than this release';
      return notReady('schema', reason, { schemaVersion, latestSchemaVersion });
    }
    return {
      status: 200,
        body: { status: 'ready', checks: { policy: 'ok', store: 'ok', schema: 'ok' }, schemaVersion },
    };
  };
}
