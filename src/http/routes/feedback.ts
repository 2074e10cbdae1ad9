import { FeedbackRequestSchema, describeIssues } from '../../cds/schemas.js';
import { CDS_SERVICES } from '../../cds/services.js';
import type { FeedbackItemSummary } from '../../log/logger.js';
import { AppError } from '../errors.js';
import type { FeedbackStore } from '../feedback-store.js';
import type { RouteHandler } from '../respond.js';

/**
 * `POST /cds-services/{id}/feedback` (CDS Hooks 2.0 §Feedback). The spec names no response code;
 * this answers 200 with how many items were new and how many were repeats. Repeats are fine: the
 * spec asks for idempotence, so sending the same feedback twice changes nothing.
 */
export function feedbackHandler(store: FeedbackStore): RouteHandler {
  return async (req) => {
    const serviceId = String(req.params['id'] ?? '');
    if (!CDS_SERVICES.some((service) => service.id === serviceId)) {
      throw new AppError('CDS_ERR_SERVICE_NOT_FOUND');
    }
    const parsed = FeedbackRequestSchema.safeParse(req.body);
    if (!parsed.success) {
      throw new AppError('CDS_ERR_REQUEST_INVALID', { issues: describeIssues(parsed.error) });
    }
    const items: FeedbackItemSummary[] = [];
    for (const item of parsed.data.feedback) {
      const overrideReasonCode = item.overrideReason?.reason?.code;
      const outcome = await store.record({
        serviceId,
        card: item.card,
        outcome: item.outcome,
        acceptedSuggestionIds: (item.acceptedSuggestions ?? []).map((s) => s.id),
        overrideReasonCode,
        outcomeTimestamp: item.outcomeTimestamp,
      });
      items.push({ outcome: item.outcome, overrideReasonCode, duplicate: outcome === 'duplicate' });
    }
    const duplicates = items.filter((item) => item.duplicate).length;
    return {
      status: 200,
      body: { recorded: items.length - duplicates, alreadyRecorded: duplicates },
      detail: { kind: 'feedback', serviceId, items },
    };
  };
}
