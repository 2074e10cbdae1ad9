import type { Response } from 'express';
import type { CardTemplates } from '../../cds/card-templates.js';
import { evaluateHook, type HookEvaluation } from '../../cds/evaluate-hook.js';
import { addReviewLinks } from '../../cds/review-links.js';
import { parseHookRequest } from '../../cds/parse-hook-request.js';
import type { CdsRequest } from '../../cds/schemas.js';
import type { Policy } from '../../core/policy.js';
import type { FallbackSummary, HookCallSummary } from '../../log/logger.js';
import type { PendingJti } from '../../security/replay-cache.js';
import { authenticatedClient, pendingJtiOf, refuseUnlessCommitted } from '../auth.js';
import type { AuditTrail } from '../audit-trail.js';
import { AppError } from '../errors.js';
import { explainRefusal, limitFhirAccess } from '../fhir-server-access.js';
import type { Gather } from '../gather-data.js';
import { requestState } from '../request-context.js';
import type { RouteHandler } from '../respond.js';

export interface ServiceRouteDeps {
  readonly policy: Policy;
  /** sha256 (hex) of the policy file's bytes: on every card's source label and every hook-call log line. */
  readonly policyContentHash: string;
  readonly templates: CardTemplates;
  readonly clock: () => Date;
  readonly gather: Gather;
  /** Every card returned is recorded here before the response goes out. */
  readonly audit: AuditTrail;
  /** The URL of a card's advisory page (src/security/review-link-token.ts); no links when absent. */
  readonly reviewLinkFor?: (cardUuid: string) => string;
  /** Told the rule and indicator of each card returned (the metrics, src/http/metrics.ts). */
  readonly onCards?: (cards: HookEvaluation['audit']['cards']) => void;
}

/**
 * `POST /cds-services/{id}` (CDS Hooks 2.0 §Calling a CDS Service): unknown id 404, a hook the id
 * is not registered for 400, a body or context that does not validate 400 (all decided by
 * src/cds/parse-hook-request.ts), required data unobtainable 412, else 200 with the cards the pure
 * orchestrator in src/cds builds. The FHIR server is called only if the caller may use it.
 */
export function serviceHandler(deps: ServiceRouteDeps): RouteHandler {
  return async (req, res) => {
    const parsed = parseHookRequest(String(req.params['id'] ?? ''), req.body);
    switch (parsed.kind) {
      case 'unknown-service':
        throw new AppError('CDS_ERR_SERVICE_NOT_FOUND');
      case 'unsupported-hook':
        throw new AppError('CDS_ERR_HOOK_NOT_SUPPORTED', { supportedHooks: parsed.supportedHooks });
      case 'invalid':
        throw new AppError('CDS_ERR_REQUEST_INVALID', { issues: parsed.issues });
      case 'ok':
        break;
    }
    const { service, request } = parsed;
    requestState(res).serviceId = service.id;
    // A fhirServer this client may not use is never called (server-side request forgery).
    const access = limitFhirAccess(request, authenticatedClient(res).fhirServers);
    // The token id is committed before any FHIR request carries the client's fhirAuthorization token
    // out (docs/security.md, "The replay cache"); a call answered from prefetch commits it later,
    // with its cards.
    const pending = pendingJtiOf(res);
    if (pending !== undefined && mayFetch(access.request, service.prefetch)) {
      // A key left out of prefetch will be fetched: commit now, before the fallback's deadline starts,
      // so the commit does not spend its budget. The wrapper below still guards every request (a
      // supplied bundle's next page, say).
      await commitBeforeFetch(res, pending);
    }
    const gathered =
      pending === undefined
        ? await deps.gather(access.request, service.prefetch)
        : await deps.gather(access.request, service.prefetch, { beforeFetch: () => commitBeforeFetch(res, pending) });
    if (pending?.started() === true) {
      // The fallback ran: answer as the store decided, whatever the fetch made of a refusal.
      refuseUnlessCommitted(res, pending, await pending.commit());
    }
    const base = (fallback: FallbackSummary): HookCallSummary => ({
      kind: 'hook-call',
      serviceId: service.id,
      hook: service.hook,
      hookInstance: request.hookInstance,
      ruleIds: [],
      policyId: deps.policy.id,
      policyVersion: deps.policy.version,
      policyContentHash: deps.policyContentHash,
      cardCount: 0,
      fhirFallback: fallback,
      missingKeys: [],
      cardProblems: [],
      unavailableKeys: [],
      ...(access.refused === undefined ? {} : { fhirServerRefused: access.refused }),
    });
    if (gathered.kind === 'unavailable') {
      // The 412 leaves through the error middleware; its summary line still names the call.
      requestState(res).detail = {
        ...base(gathered.fallback),
        unavailableKeys: gathered.unavailable.map((item) => item.key),
      };
      const unavailable =
        access.refused === undefined ? gathered.unavailable : explainRefusal(gathered.unavailable, access.refused);
      throw new AppError('CDS_ERR_PREFETCH_UNAVAILABLE', { unavailable });
    }
    const now = deps.clock();
    const result = evaluateHook(
      { serviceId: service.id, request, data: gathered.data },
      { policy: deps.policy, policyContentHash: deps.policyContentHash, templates: deps.templates, now },
    );
    await recordCards(deps.audit, result, { serviceId: service.id, hook: service.hook, request, now }, res, pending);
    deps.onCards?.(result.audit.cards);
    const linkFor = deps.reviewLinkFor;
    return {
      status: 200,
      body: linkFor === undefined ? result.response : addReviewLinks(result.response, linkFor),
      detail: {
        ...base(gathered.fallback),
        ruleIds: result.ruleIds,
        policyId: result.policyId,
        policyVersion: result.policyVersion,
        cardCount: result.response.cards.length,
        missingKeys: gathered.data.missing,
        cardProblems: result.problems,
      },
    };
  };
}

/** True when the request lets the service call its FHIR server and leaves out a key the service prefetches. */
function mayFetch(request: CdsRequest, templates: Readonly<Record<string, string | undefined>>): boolean {
  if (request.fhirServer === undefined || request.fhirAuthorization === undefined) {
    return false;
  }
  const supplied = request.prefetch ?? {};
  return Object.keys(templates).some((key) => supplied[key] === undefined);
}

/** Commits the call's token id alone; a refusal rejects, so the FHIR request is never sent. */
async function commitBeforeFetch(res: Response, pending: PendingJti): Promise<void> {
  refuseUnlessCommitted(res, pending, await pending.commit());
}

/**
 * Commits the audit record of every card (a failure is logged and counted; the cards still go), in
 * one transaction with the call's token id when it is still pending; a token the store refuses there
 * (replayed on another instance, share full, store failed) refuses the call, and no card is kept.
 */
async function recordCards(
  audit: AuditTrail,
  result: HookEvaluation,
  call: { readonly serviceId: string; readonly hook: string; readonly request: CdsRequest; readonly now: Date },
  res: Response,
  pending: PendingJti | undefined,
): Promise<void> {
  const { iss, tenant } = authenticatedClient(res);
  const patientId = call.request.context['patientId'];
  const outcome = await audit.record(
    result,
    {
      serviceId: call.serviceId,
      hook: call.hook,
      hookInstance: call.request.hookInstance,
      client: tenant === undefined ? { iss } : { iss, tenant },
      issuedAt: call.now,
      fhirServer: call.request.fhirServer,
      patientId: typeof patientId === 'string' ? patientId : '',
    },
    requestState(res).requestId,
    pending,
  );
  if (pending !== undefined) {
    // An audit trail that did not take the id (a stand-in in a test) leaves it to be committed here.
    refuseUnlessCommitted(res, pending, outcome.token ?? (await pending.commit()));
  }
}
