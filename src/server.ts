import cluster from 'node:cluster';
import { createServer, type Server } from 'node:http';
import { performance } from 'node:perf_hooks';
import { pathToFileURL } from 'node:url';
import { formatEnvProblems, parseEnvConfig, type EnvConfig } from './config/env-config.js';
import { parseReviewConfig, type ReviewConfig } from './config/review-config.js';
import { readSecretValueFiles } from './config/secret-variables.js';
import { formatLoadProblem, formatLoadProblems, loadPolicyAndCards, type LoadedFiles } from './config/load-files.js';
import { seedDemoStore, type DemoSeedResult } from './demo/seed-demo-store.js';
import { createApp } from './http/app.js';
import { runPrimary } from './cluster/primary.js';
import { workerRole, type WorkerRole } from './cluster/worker-side.js';
import { createServiceMetrics, measuredStore, type ServiceMetrics } from './http/metrics.js';
import { answerClientErrors } from './http/client-error.js';
import { serverTimeoutOptions } from './http/connection-timeouts.js';
import { prepareGracefulClose } from './http/graceful-close.js';
import { createPolicyHolder, snapshotOf, type PolicyHolder } from './live-policy/policy-snapshot.js';
import { createPolicyReloader, type ReloadOutcome, type ReloadTrigger } from './live-policy/reload-policy.js';
import { watchPolicyFiles, type PolicyWatch } from './live-policy/watch-policy.js';
import { createLogger, logClientError, type Logger } from './log/logger.js';
import { createRefusalLimiter } from './log/refusal-limiter.js';
import { notYetInEffectWarning } from './policy/effective-from.js';
import { startRetentionPurge } from './retention-purge.js';
import { setUpAuthentication, type AuthenticationSetup } from './security/setup-authentication.js';
import { setUpReviewAccess, type ReviewSetup } from './security/setup-review-access.js';
import { openConfiguredStore } from './store/open-store.js';
import { loadOrCreateSecret, patientKey } from './store/patient-key.js';
import type { Store } from './store/store.js';

/**
 * The process entry point: read the environment, load the policy and card templates (refusing to
 * start, with every problem listed, when any is wrong), open the store and the patient-key secret in
 * the data directory (refusing to start without them: a service that forgot its cards and feedback
 * would break the audit trail's promise), build the app, listen, purge expired records on a schedule,
 * reload the policy on SIGHUP (and on file change when `OXYGEN_CHECKER_POLICY_WATCH` is on; see
 * src/live-policy), and close cleanly on SIGTERM or SIGINT: the HTTP server first, then the store.
 * Problems go to stderr as plain lines, since the logger's level may hide them. With
 * `OXYGEN_CHECKER_WORKERS` above 1 the process started is a primary (src/cluster/primary.ts) that
 * makes the same checks once and forks that many workers, each of which runs this same start.
 */

export const DEMO_MODE_NOTICE =
  'authentication off, loopback demo mode; not for clinical use without the production trust configuration';

export const PRODUCTION_MODE_NOTICE =
  'production mode; every /cds-services call needs a signed JWT from a trusted CDS client';

export interface StartedServer {
  readonly server: Server;
  readonly url: string;
  /**
   * Reads and checks the policy file and cards again; puts them in force only if they pass, else keeps
   * the policy in force and logs every problem. SIGHUP calls it; so may tests. Never rejects.
   */
  readonly reloadPolicy: (trigger: ReloadTrigger) => Promise<ReloadOutcome>;
  readonly close: () => Promise<void>;
}

function listen(app: ReturnType<typeof createApp>, config: EnvConfig): Promise<Server> {
  return new Promise((resolve, reject) => {
    // What app.listen does, with the timeouts set: Node's defaults hold a slow body for 300 s.
    const server = createServer(serverTimeoutOptions(config.timeouts), app);
    // Inactivity either way; with no 'timeout' listener Node destroys the socket.
    server.setTimeout(config.timeouts.socketIdleTimeoutMs);
    server.listen(config.port, config.host);
    server.once('listening', () => resolve(server));
    server.once('error', reject);
  });
}

type Refused = { readonly kind: 'refused'; readonly problems: string };

/** The settings, the review settings and the policy with its cards, each checked in full. */
interface CheckedSettings {
  readonly config: EnvConfig;
  readonly reviewConfig: ReviewConfig;
  readonly files: Extract<LoadedFiles, { kind: 'ok' }>;
}

async function checkSettings(
  givenEnv: Readonly<Record<string, string | undefined>>,
  cwd: string,
): Promise<({ readonly kind: 'checked' } & CheckedSettings) | Refused> {
  // Secret values given as files (`NAME_FILE`, as container secrets are mounted) are read first.
  const secretValues = readSecretValueFiles(givenEnv, cwd);
  if (secretValues.kind === 'invalid') {
    return { kind: 'refused', problems: formatEnvProblems(secretValues.problems) };
  }
  const env = secretValues.env;
  const parsedEnv = parseEnvConfig(env, cwd);
  if (parsedEnv.kind === 'invalid') {
    return { kind: 'refused', problems: formatEnvProblems(parsedEnv.problems) };
  }
  const config = parsedEnv.config;
  const reviewParsed = parseReviewConfig(env, cwd, config.security.mode, config.store.dataDir);
  if (reviewParsed.kind === 'invalid') {
    return { kind: 'refused', problems: formatEnvProblems(reviewParsed.problems) };
  }
  const files = await loadPolicyAndCards(config);
  if (files.kind === 'invalid') {
    return { kind: 'refused', problems: formatLoadProblems(files.problems) };
  }
  return { kind: 'checked', config, reviewConfig: reviewParsed.config, files };
}

/** Opens the configured store, bringing its schema up to date (open-store.ts). */
async function openStoreOf(config: EnvConfig): Promise<{ readonly kind: 'opened'; readonly store: Store } | Refused> {
  const opened = await openConfiguredStore({
    dataDir: config.store.dataDir,
    ...(config.store.databaseUrl === undefined ? {} : { databaseUrl: config.store.databaseUrl }),
  });
  return opened.kind === 'refused'
    ? { kind: 'refused', problems: `${opened.variable}: ${opened.problem}` }
    : { kind: 'opened', store: opened.store };
}

/**
 * The number of worker processes the environment asks for (`OXYGEN_CHECKER_WORKERS`), or 1 when the
 * settings do not parse: the single-process start then refuses with every problem listed, as always.
 */
export function workersWanted(givenEnv: Readonly<Record<string, string | undefined>>, cwd: string): number {
  const secretValues = readSecretValueFiles(givenEnv, cwd);
  if (secretValues.kind === 'invalid') {
    return 1;
  }
  const parsed = parseEnvConfig(secretValues.env, cwd);
  return parsed.kind === 'ok' ? (parsed.config.workers ?? 1) : 1;
}

/**
 * What the primary of a cluster (src/cluster/primary.ts) does before it forks: every check a
 * single process makes at start (settings, policy and cards, the store and its migrations, the
 * patient-key and review-link secrets, the trust file), once, and the demo seed, so workers find
 * the store migrated, the secrets written and the seed done, and never race each other to do it.
 * The store is closed again: the primary serves no request. Returns the settings and a logger
 * carrying `bindings` on every line.
 */
export async function checkServiceStart(
  givenEnv: Readonly<Record<string, string | undefined>>,
  cwd: string,
  bindings: Readonly<Record<string, unknown>>,
): Promise<{ readonly kind: 'checked'; readonly config: EnvConfig; readonly log: Logger } | Refused> {
  const checked = await checkSettings(givenEnv, cwd);
  if (checked.kind === 'refused') {
    return checked;
  }
  const log = createLogger({ level: checked.config.logLevel }).child(bindings);
  const opened = await openStoreOf(checked.config);
  if (opened.kind === 'refused') {
    return opened;
  }
  try {
    const assembled = await assemble(checked, opened.store, log, { seedDemo: true, processMetrics: false });
    if (assembled.kind === 'refused') {
      return assembled;
    }
    if (assembled.demoSeed !== undefined) {
      logDemoSeed(log, assembled.demoSeed);
    }
  } finally {
    await opened.store.close();
  }
  return { kind: 'checked', config: checked.config, log };
}

/** Starts the service, or returns the problems that stop it. Used by `main` and by tests. */
export async function startServer(
  givenEnv: Readonly<Record<string, string | undefined>>,
  cwd: string,
  logger?: Logger,
  worker?: WorkerRole,
): Promise<{ kind: 'started'; started: StartedServer } | Refused> {
  const checked = await checkSettings(givenEnv, cwd);
  if (checked.kind === 'refused') {
    return checked;
  }
  const base = logger ?? createLogger({ level: checked.config.logLevel });
  // A worker's every line says which worker wrote it; the number is the cluster's, never a patient's.
  const log = worker === undefined ? base : base.child({ role: 'worker', worker: worker.id });
  const opened = await openStoreOf(checked.config);
  if (opened.kind === 'refused') {
    return opened;
  }
  const { store } = opened;
  try {
    const result = await startWithStore(checked, store, log, worker);
    if (result.kind === 'refused') {
      await store.close();
    }
    return result;
  } catch (error) {
    await store.close();
    throw error;
  }
}

interface Assembled {
  readonly kind: 'assembled';
  readonly policy: PolicyHolder;
  readonly metrics: ServiceMetrics;
  readonly auth: Exclude<AuthenticationSetup, { kind: 'refused' }>;
  readonly review: Extract<ReviewSetup, { kind: 'ready' }>;
  readonly patientKeyOf: (patient: { readonly fhirServer?: string; readonly patientId: string }) => string;
  readonly demoSeed: DemoSeedOutcome | undefined;
}

/**
 * Everything the app needs apart from the listener: the patient-key secret, the policy holder, the
 * metrics, the token checks (the trust file read and checked), the review access (its link secret
 * read or created) and, in demo mode when asked, the demo seed.
 */
async function assemble(
  checked: CheckedSettings,
  store: Store,
  log: Logger,
  options: { readonly seedDemo: boolean; readonly processMetrics: boolean },
): Promise<Assembled | Refused> {
  const { config, reviewConfig, files } = checked;
  const secret = loadOrCreateSecret({
    dataDir: config.store.dataDir,
    ...(config.store.patientKeyFile === undefined ? {} : { secretFile: config.store.patientKeyFile }),
  });
  if (secret.kind === 'refused') {
    return { kind: 'refused', problems: `OXYGEN_CHECKER_PATIENT_KEY_FILE: ${secret.problem}` };
  }
  const policy = createPolicyHolder(snapshotOf(files, new Date()));
  // One registry for the app and the token checks, so replay-cache answers count beside the requests.
  const metrics = createServiceMetrics({ policy, processMetrics: options.processMetrics });
  const auth = await setUpAuthentication(config.security, {
    fetch: globalThis.fetch,
    clock: () => new Date(),
    logger: log,
    store: measuredStore(store, metrics),
    onReplayInMemory: () => metrics.replayChecked('replayed'),
  });
  if (auth.kind === 'refused') {
    return { kind: 'refused', problems: auth.problems };
  }
  const review = setUpReviewAccess({
    mode: config.security.mode,
    config: reviewConfig,
    ...(auth.kind === 'production' ? { publicUrl: auth.publicUrl } : {}),
    clock: () => new Date(),
  });
  if (review.kind === 'refused') {
    return { kind: 'refused', problems: review.problems };
  }
  const patientKeyOf = (patient: { readonly fhirServer?: string; readonly patientId: string }): string =>
    patientKey(secret.secret, patient);
  // Seeded before listening, so the first page opened has content; logged after the listening line.
  const demoSeed =
    auth.kind === 'demo' && options.seedDemo ? await seedDemo(store, config, files, patientKeyOf) : undefined;
  return { kind: 'assembled', policy, metrics, auth, review, patientKeyOf, demoSeed };
}

async function startWithStore(
  checked: CheckedSettings,
  store: Store,
  log: Logger,
  worker: WorkerRole | undefined,
): Promise<{ kind: 'started'; started: StartedServer } | Refused> {
  // A worker's primary has seeded the demo store already, once (checkServiceStart).
  const assembled = await assemble(checked, store, log, { seedDemo: worker === undefined, processMetrics: true });
  if (assembled.kind === 'refused') {
    return assembled;
  }
  const { config, files } = checked;
  const { policy, metrics, auth, review, patientKeyOf, demoSeed } = assembled;
  const app = createApp(config, {
    policy,
    metrics,
    logger: log,
    clock: () => new Date(),
    fetch: globalThis.fetch,
    authenticate: auth.authenticate,
    store,
    patientKey: patientKeyOf,
    review: review.review,
    // In a cluster a scrape reaches one worker: it answers with every worker's metrics summed.
    ...(worker === undefined ? {} : { metricsText: worker.shareMetrics(metrics.registry) }),
  });
  const server = await listen(app, config);
  const parserRefusals = createRefusalLimiter();
  answerClientErrors(server, { strictTransportSecurity: config.behindTls }, (event) => {
    const source = { limiter: parserRefusals, client: event.remoteAddress ?? 'unknown', nowMs: performance.now() };
    logClientError(log, event, source);
  });
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : config.port;
  const url = `http://${config.host.includes(':') ? `[${config.host}]` : config.host}:${port}`;
  review.setListeningUrl(url);
  const started = {
    url,
    policyId: files.policy.id,
    policyVersion: files.policy.version,
    policyContentHash: files.policyContentHash,
    cardTemplates: files.templates.size,
    policyAcknowledgements: files.policyAcknowledgements,
    policyWarnings: files.policyWarnings.map(formatLoadProblem),
    policyWatch: config.policyWatch,
    dataDir: config.store.dataDir,
    ...review.summary,
  };
  if (auth.kind === 'demo') {
    log.warn({ ...started, mode: 'demo' }, `oxygen-order-checker listening; ${DEMO_MODE_NOTICE}`);
  } else {
    const trust = { mode: 'production', publicUrl: auth.publicUrl, trustedClients: auth.trustedClients };
    log.info({ ...started, ...trust }, `oxygen-order-checker listening; ${PRODUCTION_MODE_NOTICE}`);
  }
  // A policy loaded before its effectiveFrom date is used, not refused: the committee may load it early.
  const early = notYetInEffectWarning(files.policy, new Date());
  if (early !== undefined) {
    log.warn({ policyId: files.policy.id, effectiveFrom: files.policy.effectiveFrom }, early);
  }
  if (demoSeed !== undefined) {
    logDemoSeed(log, demoSeed);
  }
  const purge = startRetentionPurge({
    store,
    retentionDays: config.store.auditRetentionDays,
    intervalMin: config.store.purgeIntervalMin,
    clock: () => new Date(),
    logger: log,
  });
  const reloader = createPolicyReloader({
    holder: policy,
    paths: config,
    mode: config.security.mode,
    logger: log,
    clock: () => new Date(),
  });
  const watch: PolicyWatch | undefined = config.policyWatch
    ? watchPolicyFiles({ paths: config, logger: log, onChange: () => void reloader.reload('file-change') })
    : undefined;
  // Calls in flight get `OXYGEN_CHECKER_SHUTDOWN_GRACE_MS` to finish; then their connections are cut.
  const closeGracefully = prepareGracefulClose(server, config.shutdownGraceMs);
  const close = async (): Promise<void> => {
    watch?.close();
    // Logged once the listener is closed, so the line is true when it is read.
    const closing = closeGracefully();
    log.info({ graceMs: config.shutdownGraceMs }, 'oxygen-order-checker stopping: no new connections');
    const { forced } = await closing;
    // Only once no call can write any more: every answer sent was committed before it went out.
    await purge.stop();
    await store.close();
    log.info(forced ? { forced } : {}, 'oxygen-order-checker stopped');
  };
  return { kind: 'started', started: { server, url, reloadPolicy: (trigger) => reloader.reload(trigger), close } };
}

type DemoSeedOutcome = DemoSeedResult | { readonly kind: 'failed'; readonly errorType: string };

/**
 * Demo mode only, and only into an empty store: the invented Larkspur Bay shift (src/demo), so the
 * review pages have something to show on a fresh clone. Production never reaches this: the caller
 * seeds only when authentication is the demo's.
 */
async function seedDemo(
  store: Store,
  config: EnvConfig,
  files: Extract<LoadedFiles, { kind: 'ok' }>,
  patientKeyOf: (patient: { readonly fhirServer?: string; readonly patientId: string }) => string,
): Promise<DemoSeedOutcome> {
  try {
    return await seedDemoStore(store, new Date(), {
      policy: files.policy,
      templates: files.templates,
      policyContentHash: files.policyContentHash,
      patientKey: patientKeyOf,
      feedbackLimits: { maxRecordsPerClientPerDay: config.feedback.maxRecordsPerClientPerDay },
    });
  } catch (error) {
    // The demo's sample data is a convenience: the service still starts, with an empty review page.
    return { kind: 'failed', errorType: error instanceof Error ? error.name : typeof error };
  }
}

/** One line with counts, never patient data. */
function logDemoSeed(log: Logger, outcome: DemoSeedOutcome): void {
  switch (outcome.kind) {
    case 'seeded': {
      const { calls, advisories, feedback, units, rules } = outcome;
      log.info(
        { demoSeed: 'done', calls, advisories, feedback, units, rules },
        'demo store seeded with the invented Larkspur Bay shift (demo mode, empty store)',
      );
      return;
    }
    case 'store-not-empty':
      log.info({ demoSeed: 'skipped' }, 'demo seed skipped: the store already holds advisories');
      return;
    case 'failed':
      log.warn({ demoSeed: 'failed', errorType: outcome.errorType }, 'demo seed failed; started without sample data');
  }
}

async function main(): Promise<void> {
  if (cluster.isPrimary && workersWanted(process.env, process.cwd()) > 1) {
    process.exitCode = await runPrimary({
      check: (bindings) => checkServiceStart(process.env, process.cwd(), bindings),
    });
    // Exits by itself once the workers are gone; this only ends a process something else holds open.
    setTimeout(() => process.exit(), 1000).unref();
    return;
  }
  // A cluster's worker (src/cluster): its primary forwards SIGHUP and SIGTERM to it.
  const worker = cluster.isWorker ? workerRole() : undefined;
  // SIGHUP is the usual "read your configuration again" signal for a daemon; without a listener
  // Node would exit on it. It is listened for before start-up, so a SIGHUP sent as soon as the
  // listening line appears (or while starting) never ends the process; one sent while starting is
  // carried out once started. Kept through shutdown: a late SIGHUP must not end the process before
  // calls in flight finish. The outcome is logged by the reloader.
  const signals: { reload?: () => void; reloadAsked: boolean } = { reloadAsked: false };
  process.on('SIGHUP', () => {
    if (signals.reload === undefined) {
      signals.reloadAsked = true;
    } else {
      signals.reload();
    }
  });
  const result = await startServer(process.env, process.cwd(), undefined, worker);
  if (result.kind === 'refused') {
    process.stderr.write(`oxygen-order-checker refused to start:\n${result.problems}\n`);
    process.exitCode = 1;
    if (worker !== undefined) {
      // The channel to the primary would hold the process open; the primary sees the exit code.
      process.exit(1);
    }
    return;
  }
  const { close, reloadPolicy } = result.started;
  signals.reload = (): void => {
    void reloadPolicy('signal');
  };
  if (signals.reloadAsked) {
    signals.reload();
  }
  const stop = (): void => {
    void close().then(() => {
      process.exitCode = 0;
      if (worker !== undefined) {
        // The channel to the primary would hold the process open; pino flushes on exit.
        process.exit(0);
      }
      // Exits by itself once nothing is left; this only ends a process something else holds open.
      setTimeout(() => process.exit(0), 1000).unref();
    });
  };
  if (worker === undefined) {
    process.once('SIGTERM', stop);
    process.once('SIGINT', stop);
    return;
  }
  // A worker may get the signal twice, from its primary and from a supervisor that signals the whole
  // process group (systemd's default, Ctrl-C in a terminal): the second must not cut its calls short.
  let stopping = false;
  const stopOnce = (): void => {
    if (!stopping) {
      stopping = true;
      stop();
    }
  };
  process.on('SIGTERM', stopOnce);
  process.on('SIGINT', stopOnce);
}

/** Run only as the entry point (`node dist/server.js`), not when a test imports startServer. */
const entry = process.argv[1];
if (entry !== undefined && import.meta.url === pathToFileURL(entry).href) {
  main().catch((error: unknown) => {
    const reason = error instanceof Error ? error.message : String(error);
    process.stderr.write(`oxygen-order-checker failed to start: ${reason}\n`);
    process.exitCode = 1;
    if (cluster.isWorker) {
      process.exit(1);
    }
  });
}
