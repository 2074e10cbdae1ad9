/**
 * The service's memory, behind one asynchronous interface: the audit trail of every card issued, the
 * feedback clients send about those cards, and the replay cache of token ids. The embedded SQLite
 * store (sqlite-store.ts) is the default; a shared database can implement the same interface for
 * several instances without touching any caller. Every write resolves only once it is committed, so
 * an HTTP answer sent after `await` never acknowledges something a crash could lose.
 *
 * Nothing here holds a patient's name or a raw identifier: a patient is known only by a keyed hash
 * (patient-key.ts), and free text a caller controls is never stored.
 */

/** Card indicator, as CDS Hooks 2.0 §Card Attributes names them. */
export type StoredIndicator = 'info' | 'warning' | 'critical';

/** The client a record belongs to: the token's `iss`, and its tenant when the token carried one. */
export interface ClientIdentity {
  readonly iss: string;
  readonly tenant?: string;
}

/** One number a card shows, for the audit record and the review page (no free text from callers). */
export interface KeyNumber {
  readonly name: string;
  readonly value: string;
}

/** One SpO2 reading the advisory's chart plots. */
export interface Spo2Point {
  /** ISO 8601 instant of the reading. */
  readonly at: string;
  readonly spo2Percent: number;
}

/** One oxygen setting in force from `at` on (device, flow and FiO2 as recorded or ordered). */
export interface OxygenStep {
  readonly at: string;
  /** A plain device label (e.g. `nasal cannula`), or `room air`. */
  readonly device: string;
  readonly flowLPerMin?: number;
  readonly fio2Fraction?: number;
}

/** What the advisory page's chart needs, stored with the audit record and nothing more. */
export interface AdvisorySeries {
  readonly spo2: readonly Spo2Point[];
  readonly oxygen: readonly OxygenStep[];
  /** The target band the card judged against, when there was one. */
  readonly target?: { readonly lowPercent: number; readonly highPercent: number };
}

/** One card issued by a hook call. */
export interface AdvisoryRecord {
  readonly cardUuid: string;
  readonly suggestionUuids: readonly string[];
  readonly serviceId: string;
  readonly hook: string;
  readonly hookInstance: string;
  readonly client: ClientIdentity;
  readonly ruleId: string;
  readonly ruleVersion: number;
  readonly indicator: StoredIndicator;
  readonly summary: string;
  /** The card's detail as sent (markdown built from the service's own templates). */
  readonly detail: string;
  /** The inputs and computations behind the card (markdown; see src/cds/card-workings.ts). */
  readonly workings: string;
  readonly keyNumbers: readonly KeyNumber[];
  readonly policy: { readonly id: string; readonly version: string; readonly contentHash: string };
  /** The patient's ward or unit when the encounter named one. */
  readonly unit?: string;
  /** ISO 8601 instant the card was issued. */
  readonly issuedAt: string;
  /** Keyed hash of the patient (patient-key.ts): links one patient's advisories, names nobody. */
  readonly patientKey: string;
  readonly series: AdvisorySeries;
}

export type FeedbackOutcome = 'accepted' | 'overridden';

/** One feedback item as a client sent it (CDS Hooks 2.0 §Feedback), minus any free-text comment. */
export interface FeedbackInput {
  readonly serviceId: string;
  readonly cardUuid: string;
  readonly outcome: FeedbackOutcome;
  readonly acceptedSuggestionIds: readonly string[];
  readonly overrideReason?: { readonly system?: string; readonly code: string };
  /** As the client sent it (ISO 8601). */
  readonly outcomeTimestamp: string;
}

export interface FeedbackRecord extends FeedbackInput {
  readonly id: string;
  readonly client: ClientIdentity;
  /** ISO 8601 instant the service committed the record. */
  readonly receivedAt: string;
  /**
   * False when this service never issued the card to this client: kept and shown flagged, never
   * counted as feedback on a real advisory.
   */
  readonly knownCard: boolean;
}

/** Per-client limits on feedback, so one client cannot push out another's records. */
export interface FeedbackLimits {
  /** Records a client may add in one UTC day. */
  readonly maxRecordsPerClientPerDay: number;
}

export type FeedbackWrite =
  /** Every item is committed; `duplicates` were exact repeats of records already held. */
  | { readonly kind: 'recorded'; readonly records: readonly FeedbackRecord[]; readonly duplicates: number }
  /** Nothing was written: the new records would exceed the client's daily quota. */
  | { readonly kind: 'quota-exceeded'; readonly limit: number; readonly retryAfterS: number };

export type ReplayCheck =
  | { readonly kind: 'fresh' }
  | { readonly kind: 'replayed' }
  /** The client holds its whole share of unexpired ids; the oldest expires in `retryAfterS`. */
  | { readonly kind: 'client-full'; readonly retryAfterS: number };

/** A token id to check and remember, with what the check needs (the arguments of `checkAndRememberJti`). */
export interface TokenUse {
  /** Whose share the id counts against (the issuer, and its listed tenant). */
  readonly clientKey: string;
  readonly jti: string;
  /** Epoch ms until which the id is held. */
  readonly expiresAt: number;
  readonly now: Date;
  readonly maxPerClient: number;
}

export type AdvisoryOutcomeFilter = 'accepted' | 'overridden' | 'none';

export interface AdvisoryQuery {
  readonly unit?: string;
  readonly ruleId?: string;
  readonly indicator?: StoredIndicator;
  /** The latest feedback outcome on the advisory, or `none` for no feedback yet. */
  readonly outcome?: AdvisoryOutcomeFilter;
  /** ISO 8601 instants, inclusive from, exclusive to. */
  readonly from?: string;
  readonly to?: string;
  readonly patientKey?: string;
  readonly limit: number;
  readonly offset: number;
}

/** A row of the advisory list: the record without its series and workings, plus its latest outcome. */
export interface AdvisoryListItem {
  readonly cardUuid: string;
  readonly serviceId: string;
  readonly ruleId: string;
  readonly indicator: StoredIndicator;
  readonly summary: string;
  readonly unit?: string;
  readonly issuedAt: string;
  readonly patientKey: string;
  readonly latestOutcome?: FeedbackOutcome;
  readonly latestOverrideReasonCode?: string;
  readonly feedbackCount: number;
}

export interface AdvisoryPage {
  readonly items: readonly AdvisoryListItem[];
  /** All advisories matching the filters, for paging. */
  readonly total: number;
}

export interface AdvisoryWithFeedback extends AdvisoryRecord {
  /** Every feedback record on this card from the client it was issued to, oldest first. */
  readonly feedback: readonly FeedbackRecord[];
}

/** A page of feedback records, newest received first, with the count of all of them for paging. */
export interface FeedbackPage {
  readonly items: readonly FeedbackRecord[];
  readonly total: number;
}

export interface SummaryQuery {
  readonly from?: string;
  readonly to?: string;
}

/** How often one rule fired on one unit, and what clinicians did with it (latest outcome per card). */
export interface RuleUnitSummary {
  readonly ruleId: string;
  /** Empty string when the advisories named no unit. */
  readonly unit: string;
  readonly fired: number;
  readonly accepted: number;
  readonly overridden: number;
  readonly noFeedback: number;
  readonly overrideReasons: readonly { readonly code: string; readonly count: number }[];
}

export interface PurgeResult {
  readonly advisories: number;
  readonly feedback: number;
  readonly replayIds: number;
}

/** What a readiness probe needs of the store: the schema version found, and the one this code writes. */
export interface StoreReadiness {
  /** The schema version the database holds now (read from the database on every call). */
  readonly schemaVersion: number;
  /** The schema version this release writes and reads. */
  readonly latestSchemaVersion: number;
}

export interface Store {
  /** Records the cards of one hook call in one transaction; a card uuid already held is left as is. */
  recordAdvisories(records: readonly AdvisoryRecord[]): Promise<void>;
  /** Records one request's feedback items in one transaction, or none of them (quota). */
  recordFeedback(
    client: ClientIdentity,
    items: readonly FeedbackInput[],
    receivedAt: Date,
    limits: FeedbackLimits,
  ): Promise<FeedbackWrite>;
  /**
   * Remembers a token id for the client until `expiresAt` (epoch ms); refuses an id already held, and
   * refuses a new id when the client already holds `maxPerClient` unexpired ids.
   */
  checkAndRememberJti(
    clientKey: string,
    jti: string,
    expiresAt: number,
    now: Date,
    maxPerClient: number,
  ): Promise<ReplayCheck>;
  /**
   * One hook call's writes in one transaction, so one commit: the token id is checked and
   * remembered exactly as `checkAndRememberJti` does and, only when it is `fresh`, the call's cards
   * are recorded exactly as `recordAdvisories` does. A replayed id or a full share writes nothing
   * (no cards of a refused call are kept). When either part fails nothing is written and the
   * promise rejects.
   */
  rememberJtiAndRecordAdvisories(token: TokenUse, records: readonly AdvisoryRecord[]): Promise<ReplayCheck>;
  listAdvisories(query: AdvisoryQuery): Promise<AdvisoryPage>;
  getAdvisory(cardUuid: string): Promise<AdvisoryWithFeedback | undefined>;
  /**
   * Feedback kept for cards this service never issued to the sending client (`knownCard` false),
   * newest received first, so a reviewer can see what was flagged.
   */
  listUnmatchedFeedback(limit: number, offset: number): Promise<FeedbackPage>;
  summarise(query: SummaryQuery): Promise<readonly RuleUnitSummary[]>;
  /** The distinct units and rule ids on record, for the review page's filters. */
  facets(): Promise<{ readonly units: readonly string[]; readonly ruleIds: readonly string[] }>;
  /** Deletes advisories and their feedback issued before `cutoff`, feedback received before it, expired ids. */
  purge(cutoff: Date, now: Date): Promise<PurgeResult>;
  /** True when no advisory has ever been recorded (the demo seeds only an empty store). */
  isEmpty(): Promise<boolean>;
  /**
   * One cheap read of the database's schema version, for the readiness probe (/readyz): it rejects
   * when the database cannot be reached, and its answer shows a schema changed under a running
   * instance (restored from an older backup, or migrated by a newer release).
   */
  readiness(): Promise<StoreReadiness>;
  close(): Promise<void>;
}
