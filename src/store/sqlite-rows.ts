import type {
  AdvisoryListItem,
  AdvisoryRecord,
  AdvisorySeries,
  ClientIdentity,
  FeedbackOutcome,
  FeedbackRecord,
  KeyNumber,
  StoredIndicator,
} from './store.js';

/** Rows as the SQLite tables hold them (migrations.ts), and their mapping to the store's records. */

export interface AdvisoryRow {
  readonly card_uuid: string;
  readonly service_id: string;
  readonly hook: string;
  readonly hook_instance: string;
  readonly client_iss: string;
  readonly client_tenant: string;
  readonly rule_id: string;
  readonly rule_version: number;
  readonly indicator: StoredIndicator;
  readonly summary: string;
  readonly detail: string;
  readonly workings: string;
  readonly suggestion_uuids_json: string;
  readonly key_numbers_json: string;
  readonly series_json: string;
  readonly policy_id: string;
  readonly policy_version: string;
  readonly policy_content_hash: string;
  readonly unit: string | null;
  readonly issued_at: string;
  readonly issued_at_ms: number;
  readonly patient_key: string;
}

export interface AdvisoryListRow {
  readonly card_uuid: string;
  readonly service_id: string;
  readonly rule_id: string;
  readonly indicator: StoredIndicator;
  readonly summary: string;
  readonly unit: string | null;
  readonly issued_at: string;
  readonly patient_key: string;
  readonly latest_outcome: FeedbackOutcome | null;
  readonly latest_override_reason_code: string | null;
  readonly feedback_count: number;
}

export interface FeedbackRow {
  readonly id: string;
  readonly client_iss: string;
  readonly client_tenant: string;
  readonly service_id: string;
  readonly card_uuid: string;
  readonly advisory_card_uuid: string | null;
  readonly outcome: FeedbackOutcome;
  readonly accepted_suggestion_ids_json: string;
  readonly override_reason_system: string | null;
  readonly override_reason_code: string | null;
  readonly outcome_timestamp: string;
  readonly outcome_at_ms: number;
  readonly received_at: string;
  readonly received_at_ms: number;
}

/** Epoch ms of an ISO 8601 instant; a value that is not one is the caller's error, not stored. */
export function instantMs(text: string, field: string): number {
  const ms = Date.parse(text);
  if (!Number.isFinite(ms)) {
    throw new RangeError(`store: ${field} is not an ISO 8601 instant`);
  }
  return ms;
}

/** Bounds standing in for an open time window, so one statement serves with or without one. */
const EARLIEST_MS = -8.64e15;
const LATEST_MS = 8.64e15 + 1;

/** A query's time window in epoch ms, open ends as the widest instants a Date can hold. */
export function windowMs(query: { readonly from?: string; readonly to?: string }): { from: number; to: number } {
  return {
    from: query.from === undefined ? EARLIEST_MS : instantMs(query.from, 'from'),
    to: query.to === undefined ? LATEST_MS : instantMs(query.to, 'to'),
  };
}

export function checkPaging(limit: number, offset: number): void {
  if (!Number.isInteger(limit) || limit < 0 || !Number.isInteger(offset) || offset < 0) {
    throw new RangeError('store: limit and offset must be non-negative integers');
  }
}

/** The columns of an advisory list row (AdvisoryListRow), the same on both stores. */
export const LIST_COLUMNS = `card_uuid, service_id, rule_id, indicator, summary, unit, issued_at, patient_key,
  latest_outcome, latest_override_reason_code, feedback_count`;

/** The columns of a feedback row (FeedbackRow), named where a table has more (PostgreSQL's seq, dedup_key). */
export const FEEDBACK_COLUMNS = `id, client_iss, client_tenant, service_id, card_uuid, advisory_card_uuid, outcome,
  accepted_suggestion_ids_json, override_reason_system, override_reason_code, outcome_timestamp,
  outcome_at_ms, received_at, received_at_ms`;

/** The tenant column: '' when the token named none, so (iss, tenant) compares with plain equality. */
export function tenantColumn(client: ClientIdentity): string {
  return client.tenant ?? '';
}

function clientFromRow(iss: string, tenant: string): ClientIdentity {
  return tenant === '' ? { iss } : { iss, tenant };
}

export function advisoryToRow(record: AdvisoryRecord): AdvisoryRow {
  return {
    card_uuid: record.cardUuid,
    service_id: record.serviceId,
    hook: record.hook,
    hook_instance: record.hookInstance,
    client_iss: record.client.iss,
    client_tenant: tenantColumn(record.client),
    rule_id: record.ruleId,
    rule_version: record.ruleVersion,
    indicator: record.indicator,
    summary: record.summary,
    detail: record.detail,
    workings: record.workings,
    suggestion_uuids_json: JSON.stringify(record.suggestionUuids),
    key_numbers_json: JSON.stringify(record.keyNumbers),
    series_json: JSON.stringify(record.series),
    policy_id: record.policy.id,
    policy_version: record.policy.version,
    policy_content_hash: record.policy.contentHash,
    unit: record.unit ?? null,
    issued_at: record.issuedAt,
    issued_at_ms: instantMs(record.issuedAt, 'issuedAt'),
    patient_key: record.patientKey,
  };
}

export function rowToAdvisory(row: AdvisoryRow): AdvisoryRecord {
  return {
    cardUuid: row.card_uuid,
    suggestionUuids: JSON.parse(row.suggestion_uuids_json) as string[],
    serviceId: row.service_id,
    hook: row.hook,
    hookInstance: row.hook_instance,
    client: clientFromRow(row.client_iss, row.client_tenant),
    ruleId: row.rule_id,
    ruleVersion: row.rule_version,
    indicator: row.indicator,
    summary: row.summary,
    detail: row.detail,
    workings: row.workings,
    keyNumbers: JSON.parse(row.key_numbers_json) as KeyNumber[],
    policy: { id: row.policy_id, version: row.policy_version, contentHash: row.policy_content_hash },
    ...(row.unit === null ? {} : { unit: row.unit }),
    issuedAt: row.issued_at,
    patientKey: row.patient_key,
    series: JSON.parse(row.series_json) as AdvisorySeries,
  };
}

export function rowToListItem(row: AdvisoryListRow): AdvisoryListItem {
  return {
    cardUuid: row.card_uuid,
    serviceId: row.service_id,
    ruleId: row.rule_id,
    indicator: row.indicator,
    summary: row.summary,
    ...(row.unit === null ? {} : { unit: row.unit }),
    issuedAt: row.issued_at,
    patientKey: row.patient_key,
    ...(row.latest_outcome === null ? {} : { latestOutcome: row.latest_outcome }),
    ...(row.latest_override_reason_code === null
      ? {}
      : { latestOverrideReasonCode: row.latest_override_reason_code }),
    feedbackCount: row.feedback_count,
  };
}

export function rowToFeedback(row: FeedbackRow): FeedbackRecord {
  const reason =
    row.override_reason_code === null
      ? undefined
      : {
          ...(row.override_reason_system === null ? {} : { system: row.override_reason_system }),
          code: row.override_reason_code,
        };
  return {
    id: row.id,
    client: clientFromRow(row.client_iss, row.client_tenant),
    serviceId: row.service_id,
    cardUuid: row.card_uuid,
    outcome: row.outcome,
    acceptedSuggestionIds: JSON.parse(row.accepted_suggestion_ids_json) as string[],
    ...(reason === undefined ? {} : { overrideReason: reason }),
    outcomeTimestamp: row.outcome_timestamp,
    receivedAt: row.received_at,
    knownCard: row.advisory_card_uuid !== null,
  };
}
