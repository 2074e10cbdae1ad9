import { randomUUID } from 'node:crypto';
import express, { type Express } from 'express';
import { missingTemplates } from '../cds/evaluate-hook.js';
import { ENV_DEFAULTS, type EnvConfig } from '../config/env-config.js';
import type { PolicyHolder } from '../live-policy/policy-snapshot.js';
import type { Logger } from '../log/logger.js';
import { reasonDisplaysFrom } from '../review/override-reasons.js';
import type { ReviewAccessConfig } from '../security/review-access.js';
import type { Store } from '../store/store.js';
import { createAuditTrail, type PatientKeyOf } from './audit-trail.js';
import { commitTokenBeforeError, requireAuthentication, type Authenticate } from './auth.js';
import { answerPreflight } from './cors.js';
import { jsonErrorHandler, notFound } from './error-handler.js';
import { createGatherer, type Gather } from './gather-data.js';
import { parseJsonBody } from './json-body.js';
import { createEvaluationGate, gateLimitsFrom } from './overload.js';
import { perSnapshot, pinnedPolicy } from './pinned-policy.js';
import { PROCESS_WAIT_CLOCK, type WaitClock } from './request-context.js';
import { startRequest } from './request-start.js';
import { reviewHeaders } from './review-headers.js';
import { route } from './respond.js';
import { serviceHandler } from './routes/cds-service.js';
import { discoveryHandler } from './routes/discovery.js';
import { feedbackHandler } from './routes/feedback.js';
import { healthHandler, readinessHandler } from './routes/health.js';
import { createServiceMetrics, measuredFetch, measuredStore, metricsHandler, type ServiceMetrics } from './metrics.js';
import { policyHandler } from './routes/policy.js';
import { reviewRouter } from './routes/review.js';
import type { RefusalLimits } from '../log/refusal-limiter.js';

/**
 * The settings the app reads: a slice of EnvConfig, so tests need not invent host or paths. The
 * robustness settings fall back to their ENV_DEFAULTS when a test leaves them out.
 */
export type AppConfig = Pick<EnvConfig, 'bodyLimitBytes' | 'corsOrigins' | 'fhir'> &
  Partial<Pick<EnvConfig, 'maxConcurrentEvaluations' | 'behindTls' | 'feedback'>> &
  Partial<Pick<EnvConfig, 'maxConcurrentPerClient' | 'maxLoopDelayMs' | 'maxWaitMs' | 'metrics'>>;

export interface AppDeps {
  /**
   * The policy in force, with its content hash and card wording (src/live-policy): swapped whole by a
   * reload. Each request takes the snapshot once when it arrives and keeps it (pinned-policy.ts).
   */
  readonly policy: PolicyHolder;
  readonly logger: Logger;
  /** The time a hook call is evaluated at; injected so tests are not at the mercy of the date. */
  readonly clock: () => Date;
  /** Used for the FHIR fallback; tests pass the real global fetch against a loopback server. */
  readonly fetch: typeof fetch;
  /** The one authentication decision for every /cds-services route (see auth.ts). */
  readonly authenticate: Authenticate;
  /** Defaults to the prefetch-then-FHIR gatherer built from `fetch` and `config.fhir`. */
  readonly gather?: Gather;
  /** The service's memory: every card issued is recorded there, and feedback is committed there. */
  readonly store: Store;
  /** The keyed hash that stands for the patient in the audit trail (src/store/patient-key.ts). */
  readonly patientKey: PatientKeyOf;
  /** Defaults to random UUIDs. */
  readonly newRequestId?: () => string;
  /**
   * The clock each request's arrival, duration and wait are measured on (request-context.ts);
   * defaults to the process's. Tests of the overload gate pass their own.
   */
  readonly waitClock?: WaitClock;
  /** How many identical refusals per client are logged one by one; defaults in src/log/refusal-limiter.ts. */
  readonly refusalLogLimits?: RefusalLimits;
  /** How long /readyz waits for the store; defaults to READINESS_STORE_TIMEOUT_MS (routes/health.ts). */
  readonly readinessTimeoutMs?: number;
  /**
   * The app's Prometheus metrics (metrics.ts); built here when absent. The server builds them itself
   * so the token checks' replay cache counts into the same registry.
   */
  readonly metrics?: ServiceMetrics;
  /** The review pages and card links; /review is not served without it. */
  readonly review?: ReviewAppDeps;
  /**
   * What GET /metrics answers in a cluster's worker: every worker's metrics summed, from the primary
   * (src/cluster). Absent, it answers this process's own registry.
   */
  readonly metricsText?: () => Promise<string>;
}

/** What the review pages read from, who may read them, and how cards link to them. */
export interface ReviewAppDeps {
  readonly access: ReviewAccessConfig;
  /** The absolute URL of a card's advisory page; cards carry no link when absent. */
  readonly linkFor?: (cardUuid: string) => string;
}

const ROUTES = {
  discovery: '/cds-services',
  service: '/cds-services/:id',
  feedback: '/cds-services/:id/feedback',
  health: '/healthz',
  ready: '/readyz',
} as const;

/** Read by staff, not CDS clients: no preflight and no CORS, so other sites' scripts cannot read it. */
const POLICY_ROUTE = '/policy';

/** Prometheus text (metrics.ts); served only when the settings say so. */
const METRICS_ROUTE = '/metrics';

/**
 * Builds the express app. Route handlers are thin: they validate, call src/cds and src/fhir, and
 * return a result that one writer sends; every error leaves through one JSON error middleware.
 */
export function createApp(config: AppConfig, deps: AppDeps): Express {
  // A rule without wording would fail on the first call that fires it: fail when the app is built.
  // A reload checks the same before it swaps (load-files.ts), so a later snapshot cannot lack one.
  const unworded = missingTemplates(deps.policy.current().templates);
  if (unworded.length > 0) {
    throw new Error(`createApp: no card template for rule(s) ${unworded.join(', ')}`);
  }
  const metrics = deps.metrics ?? createServiceMetrics({ policy: deps.policy });
  const store = measuredStore(deps.store, metrics);
  const gather = deps.gather ?? createGatherer({ fetch: measuredFetch(deps.fetch, metrics), limits: config.fhir });
  const audit = createAuditTrail({ store, logger: deps.logger, patientKey: deps.patientKey });
  const feedbackLimits = config.feedback ?? {
    maxItemsPerRequest: ENV_DEFAULTS.OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS,
    maxRecordsPerClientPerDay: ENV_DEFAULTS.OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY,
  };
  const waitClock = deps.waitClock ?? PROCESS_WAIT_CLOCK;
  const gate = createEvaluationGate(gateLimitsFrom(config), {
    clock: waitClock,
    onRefused: metrics.overloadRefused,
    onAdmitted: metrics.hookAdmitted,
  });
  // Built once per policy snapshot: each closes over that snapshot's policy, hash and wording only.
  const handlersFor = perSnapshot((snapshot) => ({
    review:
      deps.review === undefined
        ? undefined
        : reviewRouter(
            {
              store,
              access: deps.review.access,
              policy: snapshot.policy,
              reasonDisplay: reasonDisplaysFrom(snapshot.templates, snapshot.policy),
              clock: deps.clock,
            },
            deps.logger,
          ),
    feedback: route(
      'feedback',
      feedbackHandler({
        store,
        limits: feedbackLimits,
        templates: snapshot.templates,
        policy: snapshot.policy,
        clock: deps.clock,
        logger: deps.logger,
        policyContentHash: snapshot.contentHash,
      }),
    ),
    service: route(
      'service',
      serviceHandler({
        policy: snapshot.policy,
        policyContentHash: snapshot.contentHash,
        templates: snapshot.templates,
        clock: deps.clock,
        gather,
        audit: audit.forPolicy(snapshot.contentHash),
        onCards: metrics.cardsIssued,
        ...(deps.review?.linkFor === undefined ? {} : { reviewLinkFor: deps.review.linkFor }),
      }),
    ),
  }));
  const app = express();
  app.disable('x-powered-by');
  app.set('etag', false);

  app.use(
    startRequest({
      securityHeaders: { strictTransportSecurity: config.behindTls ?? ENV_DEFAULTS.OXYGEN_CHECKER_BEHIND_TLS },
      logger: deps.logger,
      newRequestId: deps.newRequestId ?? randomUUID,
      ...(deps.refusalLogLimits === undefined ? {} : { refusalLimits: deps.refusalLogLimits }),
      policy: deps.policy,
      corsOrigins: config.corsOrigins,
      onRequestFinished: metrics.requestFinished,
      clock: waitClock,
    }),
  );
  // Browsers send preflights without credentials, so they are answered before authentication.
  app.options(Object.values(ROUTES), answerPreflight);
  app.get(ROUTES.health, route('healthz', healthHandler));
  app.get(
    ROUTES.ready,
    route(
      'readyz',
      readinessHandler({
        policy: deps.policy,
        store,
        ...(deps.readinessTimeoutMs === undefined ? {} : { storeTimeoutMs: deps.readinessTimeoutMs }),
      }),
    ),
  );
  if (deps.review !== undefined) {
    // Outside /cds-services authentication: the review router decides its own access, and /policy
    // is read by the same staff under the same rule (routes/policy.ts).
    app.get(POLICY_ROUTE, reviewHeaders, route('policy', policyHandler({ access: deps.review.access, clock: deps.clock })));
    app.use('/review', (req, res, next) => {
      handlersFor(pinnedPolicy(res)).review?.(req, res, next);
    });
  }

  if (config.metrics ?? false) {
    // No authentication, as a Prometheus scrape expects: the network restricts it (docs/security.md).
    app.get(METRICS_ROUTE, metricsHandler(metrics, deps.metricsText));
  }

  // The hook call commits its token id with its cards, or before any FHIR request
  // (routes/cds-service.ts); a call that ends in an error commits it first (commitTokenBeforeError).
  // Every other request has its id committed at authentication.
  const authenticatedHookCall = requireAuthentication(deps.authenticate, { deferTokenCommit: true });
  const authenticated = requireAuthentication(deps.authenticate);
  const jsonBody = parseJsonBody(config.bodyLimitBytes);
  // The hook call has its whole chain on one route, in the order the steps below give every other
  // /cds-services request, so it walks no other layer (issue 9: the shell's cost per call). Shed
  // before any cost while the loop runs late; admitted after authentication and the body, when the
  // call's whole wait is known (the signature check can queue on the thread pool) and the cap counts
  // evaluations, so a slow upload holds no slot (overload.ts).
  app.post(ROUTES.service, gate.shed, authenticatedHookCall, jsonBody, gate.admit, (req, res, next) =>
    handlersFor(pinnedPolicy(res)).service(req, res, next),
  );
  app.use('/cds-services', authenticated);
  app.use(jsonBody);
  app.get(ROUTES.discovery, route('discovery', discoveryHandler));
  app.post(ROUTES.feedback, (req, res, next) => handlersFor(pinnedPolicy(res)).feedback(req, res, next));

  app.use(notFound);
  app.use(commitTokenBeforeError);
  app.use(jsonErrorHandler(deps.logger));
  return app;
}
