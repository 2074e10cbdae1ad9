import { buildAuditRecords, type AuditCall } from '../cds/audit-records.js';
import type { HookEvaluation } from '../cds/evaluate-hook.js';
import type { Logger } from '../log/logger.js';
import type { PendingJti, ReplayAnswer } from '../security/replay-cache.js';
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

/** What became of a call's cards, and the store's answer on its token id when the call carried one. */
export interface AuditOutcome {
  readonly cards: 'recorded' | 'failed';
  /** Set when a pending token id was committed with (or before) the cards; anything but fresh refuses the call. */
  readonly token?: ReplayAnswer;
}

export interface AuditTrail {
  /**
   * Commits a record of every card before the caller answers. Never throws: advice must not be
   * blocked by the audit trail, so a failed write is logged (card uuids and rule ids only) and counted,
   * and the cards still go out.
   *
   * With `pending`, the call's token id is committed in the same transaction as the cards (one commit),
   * or alone when there are none; its answer comes back in `token`. When the id is not fresh the
   * cards are not kept and the caller refuses the call. When that transaction fails the id is committed
   * alone, and the cards count as a failed write.
   */
  record(evaluation: HookEvaluation, call: AuditCallFacts, requestId: string, pending?: PendingJti): Promise<AuditOutcome>;
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

type Written =
  | { readonly failed: false; readonly token?: ReplayAnswer }
  | { readonly failed: true; readonly error: unknown; readonly token?: ReplayAnswer };

export function createAuditTrail(deps: AuditTrailDeps): AuditTrails {
  let failures = 0;

  /** The call's cards, with its pending token id in the same transaction when it has one. */
  async function writeRecords(
    evaluation: HookEvaluation,
    call: AuditCallFacts,
    policyContentHash: string,
    pending: PendingJti | undefined,
  ): Promise<Written> {
    let records: AdvisoryRecord[];
    try {
      records =
        evaluation.audit.cards.length === 0
          ? []
          : auditRecordsFor(evaluation, call, { patientKey: deps.patientKey, policyContentHash });
    } catch (error) {
      // The id still decides the answer: committed alone, and the cards count as a failed write.
      return { failed: true, error, ...(pending === undefined ? {} : { token: await pending.commit() }) };
    }
    if (pending !== undefined) {
      const committed = await pending.commitWith(records);
      return committed.cardsFailure === undefined
        ? { failed: false, token: committed.decision }
        : { failed: true, error: committed.cardsFailure, token: committed.decision };
    }
    if (records.length === 0) {
      return { failed: false };
    }
    try {
      await deps.store.recordAdvisories(records);
      return { failed: false };
    } catch (error) {
      return { failed: true, error };
    }
  }

  const forPolicy = (policyContentHash: string): AuditTrail => ({
    async record(evaluation, call, requestId, pending) {
      const cards = evaluation.audit.cards;
      const written = await writeRecords(evaluation, call, policyContentHash, pending);
      const token = written.token === undefined ? {} : { token: written.token };
      if (!written.failed) {
        return { cards: 'recorded', ...token };
      }
      failures += 1;
      deps.logger.error(
        {
          requestId,
          audit: 'write-failed',
          serviceId: call.serviceId,
          cardUuids: cards.map((card) => card.cardUuid),
          ruleIds: cards.map((card) => card.ruleId),
          auditFailures: failures,
          ...describeFailure(written.error),
        },
        'audit trail write failed; the cards were sent unrecorded',
      );
      return { cards: 'failed', ...token };
    },
    failures: () => failures,
  });
  return { forPolicy, failures: () => failures };
}
