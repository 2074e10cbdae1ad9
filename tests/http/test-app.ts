import type { Express } from 'express';
import { ENV_DEFAULTS } from '../../src/config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../../src/config/load-files.js';
import { createApp, type AppConfig, type AppDeps } from '../../src/http/app.js';
import { allowEveryRequest } from '../../src/http/auth.js';
import { createPolicyHolder, snapshotOf, type PolicySnapshot } from '../../src/live-policy/policy-snapshot.js';
import { createLogger } from '../../src/log/logger.js';
import { openTempStore, testPatientKey } from '../helpers/temp-store.js';
import { createMemoryLog, type MemoryLog } from '../log/memory-log.js';
import { NOW } from './larkspur-fixtures.js';

/** The bundled policy and card templates, loaded the way the server loads them. */
export async function loadBundledFiles() {
  const files = await loadPolicyAndCards({
    policyPath: ENV_DEFAULTS.OXYGEN_CHECKER_POLICY,
    cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR,
  });
  if (files.kind === 'invalid') {
    throw new Error(`bundled files invalid:\n${formatLoadProblems(files.problems)}`);
  }
  return files;
}

/** The bundled files as the snapshot the server starts with, loaded at the fixtures' clock. */
export async function bundledSnapshot(): Promise<PolicySnapshot> {
  return snapshotOf(await loadBundledFiles(), NOW);
}

export const TEST_CONFIG: AppConfig = {
  bodyLimitBytes: 1_048_576,
  corsOrigins: '*',
  fhir: { callTimeoutMs: 1000, budgetMs: 2000, maxResponseBytes: 1_048_576, maxPages: 5 },
  // Shedding by waiting time off: a loaded test machine runs the event loop late for reasons of its
  // own, which would refuse calls in tests about other things. load-shedding.test.ts turns it on.
  maxLoopDelayMs: 600_000,
  // Likewise for the time a call waited before evaluation; overload-gate.test.ts and
  // signed-wait-shedding.test.ts turn it on.
  maxWaitMs: 600_000,
};

export interface TestApp {
  readonly app: Express;
  readonly log: MemoryLog;
}

/**
 * The app as the server builds it, with the clock fixed, a memory log, counting request ids and a
 * real store in a temporary directory (closed and removed when the test file ends).
 */
export async function buildTestApp(
  overrides: Partial<AppDeps> = {},
  config: Partial<AppConfig> = {},
): Promise<TestApp> {
  const log = createMemoryLog();
  let next = 0;
  const app = createApp(
    { ...TEST_CONFIG, ...config },
    {
      policy: overrides.policy ?? createPolicyHolder(await bundledSnapshot()),
      logger: createLogger({ level: 'info', destination: log.stream }),
      clock: () => NOW,
      fetch: globalThis.fetch,
      authenticate: allowEveryRequest,
      newRequestId: () => `req-${++next}`,
      patientKey: testPatientKey,
      ...overrides,
      store: overrides.store ?? openTempStore().store,
    },
  );
  return { app, log };
}
