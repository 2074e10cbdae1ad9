import { createHash, randomUUID } from 'node:crypto';
import type Database from 'better-sqlite3';
import { instantMs, rowToFeedback, tenantColumn, type FeedbackRow } from './sqlite-rows.js';
import type { ClientIdentity, FeedbackInput, FeedbackLimits, FeedbackRecord, FeedbackWrite } from './store.js';

const DAY_MS = 86_400_000;

export type NewFeedbackRow = FeedbackRow & { readonly dedup_key: string };

/**
 * What makes two feedback items the same item (CDS Hooks 2.0 §Feedback asks services to be
 * idempotent on repeats): the client, the service, the card, the outcome, the override reason, the
 * accepted suggestions (in any order) and the outcome time. A JSON array keeps the fields apart, so
 * no two different items hash alike by running one field into the next.
 */
export function feedbackDedupKey(client: ClientIdentity, item: FeedbackInput): string {
  const fields = [
    client.iss,
    tenantColumn(client),
    item.serviceId,
    item.cardUuid,
    item.outcome,
    item.overrideReason?.system ?? null,
    item.overrideReason?.code ?? null,
    [...item.acceptedSuggestionIds].sort(),
    item.outcomeTimestamp,
  ];
  return createHash('sha256').update(JSON.stringify(fields)).digest('hex');
}

/** Seconds from `at` to the next UTC midnight, when the client's daily quota starts again. */
export function secondsToNextUtcDay(at: Date): number {
  return Math.max(1, Math.ceil((utcDayMs(at.getTime()).endMs - at.getTime()) / 1000));
}

/** The UTC day `atMs` falls in, as [start, end) epoch ms: the span a client's daily quota counts. */
export function utcDayMs(atMs: number): { readonly startMs: number; readonly endMs: number } {
  const startMs = Math.floor(atMs / DAY_MS) * DAY_MS;
  return { startMs, endMs: startMs + DAY_MS };
}

/** A new feedback row for `item`, on either store; `known` says whether the card was issued to this client. */
export function newFeedbackRow(
  client: ClientIdentity,
  item: FeedbackInput,
  dedupKey: string,
  known: boolean,
  receivedAt: Date,
): NewFeedbackRow {
  return {
    id: randomUUID(),
    dedup_key: dedupKey,
    client_iss: client.iss,
    client_tenant: tenantColumn(client),
    service_id: item.serviceId,
    card_uuid: item.cardUuid,
    advisory_card_uuid: known ? item.cardUuid : null,
    outcome: item.outcome,
    accepted_suggestion_ids_json: JSON.stringify(item.acceptedSuggestionIds),
    override_reason_system: item.overrideReason?.system ?? null,
    override_reason_code: item.overrideReason?.code ?? null,
    outcome_timestamp: item.outcomeTimestamp,
    outcome_at_ms: instantMs(item.outcomeTimestamp, 'outcomeTimestamp'),
    received_at: receivedAt.toISOString(),
    received_at_ms: receivedAt.getTime(),
  };
}

export type RecordFeedbackNow = (
  client: ClientIdentity,
  items: readonly FeedbackInput[],
  receivedAt: Date,
  limits: FeedbackLimits,
) => FeedbackWrite;

/** Prepares the feedback statements once and returns the synchronous, transactional writer. */
export function prepareFeedbackWriter(db: Database.Database): RecordFeedbackNow {
  const byDedupKey = db.prepare<[string], FeedbackRow>('SELECT * FROM feedback WHERE dedup_key = ?');
  const isIssuedTo = db.prepare<[string, string, string, string], { one: number }>(
    `SELECT 1 AS one FROM advisory
      WHERE card_uuid = ? AND client_iss = ? AND client_tenant = ? AND service_id = ?`,
  );
  const addedToday = db.prepare<[string, string, number, number], { n: number }>(
    `SELECT count(*) AS n FROM feedback
      WHERE client_iss = ? AND client_tenant = ? AND received_at_ms >= ? AND received_at_ms < ?`,
  );
  const insert = db.prepare<Record<string, unknown>>(
    `INSERT INTO feedback (id, dedup_key, client_iss, client_tenant, service_id, card_uuid,
        advisory_card_uuid, outcome, accepted_suggestion_ids_json, override_reason_system,
        override_reason_code, outcome_timestamp, outcome_at_ms, received_at, received_at_ms)
      VALUES (@id, @dedup_key, @client_iss, @client_tenant, @service_id, @card_uuid,
        @advisory_card_uuid, @outcome, @accepted_suggestion_ids_json, @override_reason_system,
        @override_reason_code, @outcome_timestamp, @outcome_at_ms, @received_at, @received_at_ms)`,
  );
  const refreshLatest = prepareLatestRefresh(db);

  const write = db.transaction(
    (client: ClientIdentity, items: readonly FeedbackInput[], receivedAt: Date, limits: FeedbackLimits) => {
      const tenant = tenantColumn(client);
      // Each item is either a repeat of a row held (or of an earlier item in this request) or new.
      const slots: ({ kind: 'held'; row: FeedbackRow } | { kind: 'new'; row: FeedbackRow })[] = [];
      const newByKey = new Map<string, NewFeedbackRow>();
      for (const item of items) {
        const dedupKey = feedbackDedupKey(client, item);
        const held = byDedupKey.get(dedupKey) ?? newByKey.get(dedupKey);
        if (held !== undefined) {
          slots.push({ kind: 'held', row: held });
          continue;
        }
        const known = isIssuedTo.get(item.cardUuid, client.iss, tenant, item.serviceId) !== undefined;
        const row = newFeedbackRow(client, item, dedupKey, known, receivedAt);
        newByKey.set(dedupKey, row);
        slots.push({ kind: 'new', row });
      }

      const day = utcDayMs(receivedAt.getTime());
      const already = addedToday.get(client.iss, tenant, day.startMs, day.endMs)?.n ?? 0;
      if (newByKey.size > 0 && already + newByKey.size > limits.maxRecordsPerClientPerDay) {
        return {
          kind: 'quota-exceeded',
          limit: limits.maxRecordsPerClientPerDay,
          retryAfterS: secondsToNextUtcDay(receivedAt),
        } satisfies FeedbackWrite;
      }

      const touched = new Set<string>();
      for (const row of newByKey.values()) {
        insert.run({ ...row });
        if (row.advisory_card_uuid !== null) {
          touched.add(row.advisory_card_uuid);
        }
      }
      for (const cardUuid of touched) {
        refreshLatest(cardUuid);
      }
      const records: FeedbackRecord[] = slots.map((slot) => rowToFeedback(slot.row));
      return {
        kind: 'recorded',
        records,
        duplicates: slots.filter((slot) => slot.kind === 'held').length,
      } satisfies FeedbackWrite;
    },
  );

  return (client, items, receivedAt, limits) => {
    if (!Number.isInteger(limits.maxRecordsPerClientPerDay) || limits.maxRecordsPerClientPerDay < 0) {
      throw new RangeError('store: maxRecordsPerClientPerDay must be a non-negative integer');
    }
    if (!Number.isFinite(receivedAt.getTime())) {
      throw new RangeError('store: receivedAt is not a valid date');
    }
    return write.immediate(client, items, receivedAt, limits);
  };
}

/**
 * Sets an advisory's latest outcome, its reason and its feedback count from the known-card feedback
 * it holds. "Latest" is by the clinician's outcome time, then by arrival, then by insertion: a late
 * retry of an old decision never hides a newer one.
 */
export function prepareLatestRefresh(db: Database.Database): (cardUuid: string) => void {
  const latestOrder = 'ORDER BY outcome_at_ms DESC, received_at_ms DESC, seq DESC LIMIT 1';
  const refresh = db.prepare<{ card: string }>(
    `UPDATE advisory SET
        latest_outcome = (SELECT outcome FROM feedback WHERE advisory_card_uuid = @card ${latestOrder}),
        latest_override_reason_code =
          (SELECT override_reason_code FROM feedback WHERE advisory_card_uuid = @card ${latestOrder}),
        feedback_count = (SELECT count(*) FROM feedback WHERE advisory_card_uuid = @card)
      WHERE card_uuid = @card`,
  );
  return (cardUuid) => {
    refresh.run({ card: cardUuid });
  };
}
