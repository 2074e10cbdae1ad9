import type { CardTemplates } from '../../cds/card-templates.js';
import { offeredOverrideReasons } from '../../cds/policy-card-text.js';
import type { Policy } from '../../core/policy.js';
import { FeedbackRequestSchema, describeIssues, type FeedbackRequest } from '../../cds/schemas.js';
import { CDS_SERVICES } from '../../cds/services.js';
import type { FeedbackConfig } from '../../config/env-config.js';
import type { FeedbackItemSummary, Logger } from '../../log/logger.js';
import type { ClientIdentity, FeedbackInput, FeedbackRecord, FeedbackWrite, Store } from '../../store/store.js';
import { authenticatedClient } from '../auth.js';
import { AppError } from '../errors.js';
import { requestState } from '../request-context.js';
import type { RouteHandler } from '../respond.js';

export interface FeedbackRouteDeps {
  readonly store: Store;
  readonly limits: FeedbackConfig;
  readonly templates: CardTemplates;
  /** The policy in force: its override reasons are offered on cards beside the card files' (policy-card-text.ts). */
  readonly policy: Policy;
  readonly clock: () => Date;
  readonly logger: Logger;
  /** sha256 (hex) of the policy file's bytes the service runs on: named on the feedback log line. */
  readonly policyContentHash: string;
}

/** Our card uuids are RFC 9562 UUIDs (stable-uuid.ts); anything else a caller sent is not logged. */
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const NOT_A_UUID = '(not a uuid)';
const NOT_OFFERED = '(not offered)';

function tooManyItems(body: unknown, max: number): number | undefined {
  const items = (body as { feedback?: unknown } | null)?.feedback;
  return Array.isArray(items) && items.length > max ? items.length : undefined;
}

function toInput(serviceId: string, item: FeedbackRequest['feedback'][number]): FeedbackInput {
  const reason = item.overrideReason?.reason;
  // The free-text userComment is never kept: it may name the patient.
  const overrideReason =
    reason?.code === undefined
      ? undefined
      : reason.system === undefined
        ? { code: reason.code }
        : { system: reason.system, code: reason.code };
  return {
    serviceId,
    cardUuid: item.card,
    outcome: item.outcome,
    acceptedSuggestionIds: (item.acceptedSuggestions ?? []).map((s) => s.id),
    ...(overrideReason === undefined ? {} : { overrideReason }),
    outcomeTimestamp: item.outcomeTimestamp,
  };
}

async function commit(
  deps: FeedbackRouteDeps,
  client: ClientIdentity,
  items: readonly FeedbackInput[],
  receivedAt: Date,
  requestId: string,
): Promise<FeedbackWrite> {
  try {
    return await deps.store.recordFeedback(client, items, receivedAt, {
      maxRecordsPerClientPerDay: deps.limits.maxRecordsPerClientPerDay,
    });
  } catch (error) {
    const errorType = error instanceof Error ? error.name : typeof error;
    deps.logger.error({ requestId, feedback: 'write-failed', clientIss: client.iss, errorType }, 'feedback not recorded');
    throw new AppError('CDS_ERR_STORE_UNAVAILABLE', { cause: error });
  }
}

/** The rule of each card this service issued to the client, for the log line; a failed look-up leaves it out. */
async function ruleIdsOf(store: Store, records: readonly FeedbackRecord[]): Promise<Map<string, string>> {
  const known = [...new Set(records.filter((r) => r.knownCard).map((r) => r.cardUuid))];
  const ruleIds = new Map<string, string>();
  for (const cardUuid of known) {
    try {
      const advisory = await store.getAdvisory(cardUuid);
      if (advisory !== undefined) {
        ruleIds.set(cardUuid, advisory.ruleId);
      }
    } catch {
      // Only the log line loses the rule id; the feedback is already committed.
    }
  }
  return ruleIds;
}

/**
 * `POST /cds-services/{id}/feedback` (CDS Hooks 2.0 §Feedback). The spec names no response code; this
 * answers 200 once every item is committed, with how many were new, how many were exact repeats (the
 * spec asks for idempotence) and how many were for cards this service never issued to this client
 * (kept and flagged, never counted against a real card). Feedback is tied to the authenticated
 * client, within per-request and per-day limits, so one client cannot push out another's records.
 */
export function feedbackHandler(deps: FeedbackRouteDeps): RouteHandler {
  const offeredCodes = new Set(
    [...deps.templates].flatMap(([ruleId, template]) => offeredOverrideReasons(deps.policy, ruleId, template).map((r) => r.code)),
  );
  return async (req, res) => {
    const serviceId = String(req.params['id'] ?? '');
    if (!CDS_SERVICES.some((service) => service.id === serviceId)) {
      throw new AppError('CDS_ERR_SERVICE_NOT_FOUND');
    }
    // Counted before the items are checked, so an oversized list is answered by its size alone.
    const count = tooManyItems(req.body, deps.limits.maxItemsPerRequest);
    if (count !== undefined) {
      throw new AppError('CDS_ERR_FEEDBACK_TOO_MANY_ITEMS', {
        issues: [
          {
            path: 'feedback',
            message: `holds ${count} items; this service takes at most ${deps.limits.maxItemsPerRequest} in one request`,
          },
        ],
      });
    }
    const parsed = FeedbackRequestSchema.safeParse(req.body);
    if (!parsed.success) {
      throw new AppError('CDS_ERR_REQUEST_INVALID', { issues: describeIssues(parsed.error) });
    }
    const { iss, tenant } = authenticatedClient(res);
    const client: ClientIdentity = tenant === undefined ? { iss } : { iss, tenant };
    const items = parsed.data.feedback.map((item) => toInput(serviceId, item));
    const receivedAt = deps.clock();
    const write = await commit(deps, client, items, receivedAt, requestState(res).requestId);
    if (write.kind === 'quota-exceeded') {
      res.setHeader('Retry-After', String(write.retryAfterS));
      throw new AppError('CDS_ERR_FEEDBACK_QUOTA_EXCEEDED', {
        issues: [
          {
            path: 'feedback',
            message: `this client's limit of ${write.limit} feedback records a day (UTC) would be exceeded; nothing was recorded`,
          },
        ],
      });
    }
    const ruleIds = await ruleIdsOf(deps.store, write.records);
    // One record per item, in order: a repeat comes back as the record already held, which was
    // received earlier or, for an item sent twice in this request, is a record seen just before.
    const seen = new Set<string>();
    const summaries: FeedbackItemSummary[] = write.records.map((record) => {
      const code = record.overrideReason?.code;
      const duplicate = record.receivedAt !== receivedAt.toISOString() || seen.has(record.id);
      seen.add(record.id);
      return {
        cardUuid: UUID.test(record.cardUuid) ? record.cardUuid : NOT_A_UUID,
        ruleId: ruleIds.get(record.cardUuid),
        knownCard: record.knownCard,
        outcome: record.outcome,
        overrideReasonCode: code === undefined ? undefined : offeredCodes.has(code) ? code : NOT_OFFERED,
        duplicate,
      };
    });
    return {
      status: 200,
      body: {
        recorded: write.records.length - write.duplicates,
        alreadyRecorded: write.duplicates,
        unknownCards: write.records.filter((record) => !record.knownCard).length,
      },
      detail: { kind: 'feedback', serviceId, clientIss: iss, policyContentHash: deps.policyContentHash, items: summaries },
    };
  };
}
