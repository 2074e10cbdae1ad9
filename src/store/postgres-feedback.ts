import type pg from 'pg';
import { LOCK_CLASS } from './postgres-pool.js';
import { feedbackDedupKey, newFeedbackRow, secondsToNextUtcDay, utcDayMs, type NewFeedbackRow } from './sqlite-feedback.js';
import { FEEDBACK_COLUMNS, instantMs, rowToFeedback, tenantColumn, type FeedbackRow } from './sqlite-rows.js';
import type { ClientIdentity, FeedbackInput, FeedbackLimits, FeedbackRecord, FeedbackWrite } from './store.js';

/** The in-process queue key and the advisory-lock text of one client's feedback quota. */
export function feedbackClientKey(client: ClientIdentity): string {
  return JSON.stringify(['feedback', client.iss, tenantColumn(client)]);
}

/**
 * Checks what can be checked before a connection is taken, so a request with an item that cannot be
 * stored writes nothing (as on SQLite).
 */
export function checkFeedbackArguments(items: readonly FeedbackInput[], receivedAt: Date, limits: FeedbackLimits): void {
  if (!Number.isInteger(limits.maxRecordsPerClientPerDay) || limits.maxRecordsPerClientPerDay < 0) {
    throw new RangeError('store: maxRecordsPerClientPerDay must be a non-negative integer');
  }
  if (!Number.isFinite(receivedAt.getTime())) {
    throw new RangeError('store: receivedAt is not a valid date');
  }
  for (const item of items) {
    instantMs(item.outcomeTimestamp, 'outcomeTimestamp');
  }
}

/**
 * One request's feedback in the caller's transaction, with the same answers as the SQLite writer
 * (sqlite-feedback.ts). The client's advisory lock is taken first, so two instances counting the
 * same client's daily quota take turns: neither can pass the quota by counting before the other's
 * records are committed. Exact repeats are found by `dedup_key` under the same lock.
 */
export async function writeFeedback(
  client: pg.ClientBase,
  identity: ClientIdentity,
  items: readonly FeedbackInput[],
  receivedAt: Date,
  limits: FeedbackLimits,
): Promise<FeedbackWrite> {
  const tenant = tenantColumn(identity);
  await client.query(`SELECT pg_advisory_xact_lock(${String(LOCK_CLASS.feedback)}, hashtext($1))`, [
    feedbackClientKey(identity),
  ]);
  const slots: ({ kind: 'held'; row: FeedbackRow } | { kind: 'new'; row: FeedbackRow })[] = [];
  const newByKey = new Map<string, NewFeedbackRow>();
  for (const item of items) {
    const dedupKey = feedbackDedupKey(identity, item);
    const held =
      (await client.query<FeedbackRow>(`SELECT ${FEEDBACK_COLUMNS} FROM feedback WHERE dedup_key = $1`, [dedupKey]))
        .rows[0] ?? newByKey.get(dedupKey);
    if (held !== undefined) {
      slots.push({ kind: 'held', row: held });
      continue;
    }
    const issued = await client.query(
      `SELECT 1 FROM advisory
        WHERE card_uuid = $1 AND client_iss = $2 AND client_tenant = $3 AND service_id = $4`,
      [item.cardUuid, identity.iss, tenant, item.serviceId],
    );
    const row = newFeedbackRow(identity, item, dedupKey, issued.rowCount === 1, receivedAt);
    newByKey.set(dedupKey, row);
    slots.push({ kind: 'new', row });
  }

  const day = utcDayMs(receivedAt.getTime());
  const counted = await client.query<{ n: number }>(
    `SELECT count(*) AS n FROM feedback
      WHERE client_iss = $1 AND client_tenant = $2 AND received_at_ms >= $3 AND received_at_ms < $4`,
    [identity.iss, tenant, day.startMs, day.endMs],
  );
  const already = counted.rows[0]?.n ?? 0;
  if (newByKey.size > 0 && already + newByKey.size > limits.maxRecordsPerClientPerDay) {
    return {
      kind: 'quota-exceeded',
      limit: limits.maxRecordsPerClientPerDay,
      retryAfterS: secondsToNextUtcDay(receivedAt),
    };
  }

  const touched = new Set<string>();
  for (const row of newByKey.values()) {
    await client.query(
      `INSERT INTO feedback (id, dedup_key, client_iss, client_tenant, service_id, card_uuid,
          advisory_card_uuid, outcome, accepted_suggestion_ids_json, override_reason_system,
          override_reason_code, outcome_timestamp, outcome_at_ms, received_at, received_at_ms)
        VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15)`,
      [
        row.id,
        row.dedup_key,
        row.client_iss,
        row.client_tenant,
        row.service_id,
        row.card_uuid,
        row.advisory_card_uuid,
        row.outcome,
        row.accepted_suggestion_ids_json,
        row.override_reason_system,
        row.override_reason_code,
        row.outcome_timestamp,
        row.outcome_at_ms,
        row.received_at,
        row.received_at_ms,
      ],
    );
    if (row.advisory_card_uuid !== null) {
      touched.add(row.advisory_card_uuid);
    }
  }
  // In card order, as purge locks them, so two transactions never wait on each other in a cycle.
  for (const cardUuid of [...touched].sort()) {
    await refreshLatest(client, cardUuid);
  }
  const records: FeedbackRecord[] = slots.map((slot) => rowToFeedback(slot.row));
  return { kind: 'recorded', records, duplicates: slots.filter((slot) => slot.kind === 'held').length };
}

const LATEST_ORDER = 'ORDER BY outcome_at_ms DESC, received_at_ms DESC, seq DESC LIMIT 1';

/**
 * Sets an advisory's latest outcome, reason and feedback count from its known-card feedback, as on
 * SQLite (prepareLatestRefresh). The advisory row is locked first, in a statement of its own: under
 * READ COMMITTED the UPDATE that follows then reads the feedback as committed by whoever held the
 * row before (another instance's feedback, or a purge), not as it was when this transaction began.
 */
export async function refreshLatest(client: pg.ClientBase, cardUuid: string): Promise<void> {
  await client.query('SELECT 1 FROM advisory WHERE card_uuid = $1 FOR UPDATE', [cardUuid]);
  await client.query(
    `UPDATE advisory SET
        latest_outcome = (SELECT outcome FROM feedback WHERE advisory_card_uuid = $1 ${LATEST_ORDER}),
        latest_override_reason_code =
          (SELECT override_reason_code FROM feedback WHERE advisory_card_uuid = $1 ${LATEST_ORDER}),
        feedback_count = (SELECT count(*) FROM feedback WHERE advisory_card_uuid = $1)
      WHERE card_uuid = $1`,
    [cardUuid],
  );
}
