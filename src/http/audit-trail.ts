import { buildAuditRecords, type AuditCall } from '../cds/audit-records.js';
import type { HookEvaluation } from '../cds/evaluate-hook.js';
import type { Logger } from '../log/logger.js';
import type { AdvisoryRecord, Store } from '../store/store.js';

/** The patient as the audit trail knows them: a keyed hash of the FHIR server and patient id. */
export type PatientKeyOf = (patient: { readonly fhirServer?: string; readonly patientId: string }) => string;

export interface AuditTrailDeps {
  readonly store: Store;
  readonly logger: Logger;
  readonly patientKey: PatientKeyOf;
}

export type AuditCallFacts = Omit<AuditCall, 'policyContentHash' | 'patientKey'> & {
  readonly fhirServer: string | undefined;
  readonly patientId: string;
};

/**
 * The audit records of one hook call's cards, the patient known only by their keyed hash. Shared by
 * the hook route (through `createAuditTrail`) and the demo seed, so a seeded advisory is recorded
 * exactly as a live one.
 */
export function auditRecordsFor(
  evaluation: HookEvaluation,
  call: AuditCallFacts,
  deps: Pick<AuditTrailDeps, 'patientKey'> & { readonly policyContentHash: string },
): AdvisoryRecord[] {
  const patientKey = deps.patientKey(
    call.fhirServer === undefined ? { patientId: call.patientId } : { fhirServer: call.fhirServer, patientId: call.patientId },
  );
  return buildAuditRecords(evaluation, {
    serviceId: call.serviceId,
    hook: call.hook,
    hookInstance: call.hookInstance,
    client: call.client,
    issuedAt: call.issuedAt,
    policyContentHash: deps.policyContentHash,
    patientKey,
  });
}

export interface AuditTrail {
  /**
   * Commits a record of every card before the caller answers. Never throws: advice must not be
   * blocked by the audit trail, so a failed write is logged (card uuids and rule ids only) and counted,
   * and the cards still go out.
   */
  record(evaluation: HookEvaluation, call: AuditCallFacts, requestId: string): Promise<'recorded' | 'failed'>;
  /** Hook calls whose cards could not be recorded since start. */
  failures(): number;
}

/** A store error's type and code (`SQLITE_FULL`...), never its message, which may quote data. */
function describeFailure(error: unknown): Record<string, string> {
  const errorType = error instanceof Error ? error.name : typeof error;
  const code = (error as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? { errorType, errorCode: code.slice(0, 64) } : { errorType };
}

/** The trail for each policy in force in turn; one count of failures across them all. */
export interface AuditTrails {
  /** Records under `policyContentHash`: the hash of the policy snapshot that produced the cards. */
  forPolicy(policyContentHash: string): AuditTrail;
  failures(): number;
}

export function createAuditTrail(deps: AuditTrailDeps): AuditTrails {
  let failures = 0;
  const forPolicy = (policyContentHash: string): AuditTrail => ({
    async record(evaluation, call, requestId) {
      if (evaluation.audit.cards.length === 0) {
        return 'recorded';
      }
      const cards = evaluation.audit.cards;
      try {
        await deps.store.recordAdvisories(auditRecordsFor(evaluation, call, { patientKey: deps.patientKey, policyContentHash }));
        return 'recorded';
      } catch (error) {
        failures += 1;
        deps.logger.error(
          {
            requestId,
            audit: 'write-failed',
            serviceId: call.serviceId,
            cardUuids: cards.map((card) => card.cardUuid),
            ruleIds: cards.map((card) => card.ruleId),
            auditFailures: failures,
            ...describeFailure(error),
          },
          'audit trail write failed; the cards were sent unrecorded',
        );
        return 'failed';
      }
    },
    failures: () => failures,
  });
  return { forPolicy, failures: () => failures };
}
