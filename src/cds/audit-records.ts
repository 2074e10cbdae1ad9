import type { AdvisoryRecord, ClientIdentity, KeyNumber } from '../store/store.js';
import type { HookEvaluation } from './evaluate-hook.js';

/**
 * The audit trail's record of every card one hook call returned, built from the evaluation without
 * I/O. The patient appears only as `patientKey`, the keyed hash the caller computed (patient-key.ts):
 * no patient id, name or FHIR reference reaches a record.
 */
export interface AuditCall {
  readonly serviceId: string;
  readonly hook: string;
  readonly hookInstance: string;
  readonly client: ClientIdentity;
  readonly policyContentHash: string;
  readonly patientKey: string;
  /** When the cards were issued: the same instant they were evaluated at. */
  readonly issuedAt: Date;
}

/** The finding's values as a list, in their order, without a [name, value] pair made for each. */
function keyNumberList(values: Readonly<Record<string, string>>): KeyNumber[] {
  const list: KeyNumber[] = [];
  for (const name of Object.keys(values)) {
    // An own key of the record always has its value.
    list.push({ name, value: values[name] as string });
  }
  return list;
}

export function buildAuditRecords(evaluation: HookEvaluation, call: AuditCall): AdvisoryRecord[] {
  const issuedAt = call.issuedAt.toISOString();
  const client: ClientIdentity =
    call.client.tenant === undefined ? { iss: call.client.iss } : { iss: call.client.iss, tenant: call.client.tenant };
  const { unit } = evaluation.audit;
  // What every record of the call holds alike is made once, as the client is.
  const policy = { id: evaluation.policyId, version: evaluation.policyVersion, contentHash: call.policyContentHash };
  return evaluation.audit.cards.map((card) => ({
    cardUuid: card.cardUuid,
    suggestionUuids: [...card.suggestionUuids],
    serviceId: call.serviceId,
    hook: call.hook,
    hookInstance: call.hookInstance,
    client,
    ruleId: card.ruleId,
    ruleVersion: card.ruleVersion,
    indicator: card.indicator,
    summary: card.summary,
    detail: card.detail,
    workings: card.workings,
    keyNumbers: keyNumberList(card.keyNumbers),
    policy,
    ...(unit === undefined ? {} : { unit }),
    issuedAt,
    patientKey: call.patientKey,
    series: card.series,
  }));
}
