import type { CardTemplates } from '../cds/card-templates.js';
import { FHIR_ID_PATTERN } from '../cds/schemas.js';
import { findService } from '../cds/services.js';
import { evaluateOrder } from '../core/engine.js';
import type { Policy } from '../core/policy.js';
import type { Facts } from '../core/types.js';
import { extractFacts } from '../fhir/extract-facts.js';
import type { FhirResource } from '../fhir/gathered-data.js';
import { arrayAt, isObject, objectAt } from '../fhir/json.js';
import { createGatherer } from '../http/gather-data.js';
import type { ExportIndex, IndexedOrder } from './export-index.js';
import { sameFactsInputs } from './facts-policy-inputs.js';
import type { NdjsonProblem } from './ndjson-reader.js';
import { orderSignContext, orderSignPrefetch, recordAsOf } from './order-sign-request.js';
import { fullCollector } from './full-collection.js';
import { fhirTimeMs } from './resource-times.js';
import { SimulationTally, type Advisory, type TallySnapshot } from './simulation-tally.js';

/**
 * Replays every oxygen order of an indexed export as the order-sign call an EHR would have made when
 * it was signed, under a baseline and a proposed policy, and tallies what changes. Orders stream from
 * the index in authoredOn order and only the tally is kept, so memory does not grow with the export.
 *
 * The request's context and prefetch are built as the EHR would have sent them and the prefetch is
 * gathered exactly as the service does; then the facts are read and the engine run, as `evaluateHook`
 * does, without building the cards: the service gives one card per finding, with the finding's rule
 * id and indicator, so the advice is the same and the replay several times faster
 * (tests/cli/simulate-command.test.ts checks it against `evaluateHook`). The facts are read once per
 * order when both policies read them alike (facts-policy-inputs.ts).
 *
 * The request is not put through the service's request schema order by order: everything in it is
 * fixed by construction except the patient and encounter ids, which are checked here as that schema
 * checks them (tests/bulk/order-sign-request.test.ts checks every request built passes it whole).
 */

export const REPLAY_SERVICE_ID = 'oxygen-order-sign';

export interface SimulationPolicy {
  /** How the report names it: the file it was read from. */
  readonly file: string;
  readonly policy: Policy;
  readonly policyContentHash: string;
  readonly templates: CardTemplates;
}

export interface SimulationReport {
  readonly baseline: PolicyLabel;
  readonly proposed: PolicyLabel;
  readonly tally: TallySnapshot;
  readonly malformedLines: { readonly count: number; readonly first: readonly NdjsonProblem[] };
}

export interface PolicyLabel {
  readonly file: string;
  readonly id: string;
  readonly version: string;
  readonly contentHash: string;
  readonly standardRange: { readonly lowPercent: number; readonly highPercent: number };
  readonly hypercapnicRiskRange: { readonly lowPercent: number; readonly highPercent: number };
}

export function policyLabel(p: SimulationPolicy): PolicyLabel {
  return {
    file: p.file,
    id: p.policy.id,
    version: p.policy.version,
    contentHash: p.policyContentHash,
    standardRange: { ...p.policy.targets.standard },
    hypercapnicRiskRange: { ...p.policy.targets.hypercapnicRisk },
  };
}

const SPO2_LOINC: ReadonlySet<string> = new Set(['59408-5', '2708-6']);

/**
 * The patient's current SpO2 at order time for the report's chart: the newest SpO2 reading no older
 * than the policy's vital-signs freshness window. `observations` are newest first. Pure.
 */
export function spo2AtOrderTime(observations: readonly FhirResource[], atMs: number, freshMinutes: number): number | undefined {
  for (const o of observations) {
    const isSpo2 = arrayAt(objectAt(o, 'code'), 'coding').some((c) => isObject(c) && SPO2_LOINC.has(String(c['code'])));
    const value = objectAt(o, 'valueQuantity')?.['value'];
    if (!isSpo2 || typeof value !== 'number') continue;
    const effectiveMs = fhirTimeMs(o['effectiveDateTime']) ?? fhirTimeMs(o['issued']);
    if (effectiveMs === undefined) continue;
    return atMs - effectiveMs <= freshMinutes * 60_000 ? value : undefined;
  }
  return undefined;
}

/** Offline: the replay reads the prefetch it built and never calls a FHIR server. */
const refuseFetch: typeof fetch = () => Promise.reject(new Error('simulate does not call FHIR servers'));
const gather = createGatherer({ fetch: refuseFetch, limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 } });

const YIELD_EVERY_ORDERS = 20;
/** How often the replay asks for a full collection (see full-collection.ts). */
const COLLECT_EVERY_ORDERS = 250;

/** What the service's request schema checks of the parts of a replayed request that vary (FHIR ids). */
function idsAreValid(order: IndexedOrder): boolean {
  return FHIR_ID_PATTERN.test(order.patientId) && (order.encounterId === undefined || FHIR_ID_PATTERN.test(order.encounterId));
}

export type ProgressListener = (done: number, total: number) => void;

interface Replayed {
  readonly advice: Advisory[];
  readonly ward: string | undefined;
}

export async function runSimulation(
  index: ExportIndex,
  baseline: SimulationPolicy,
  proposed: SimulationPolicy,
  onProgress: ProgressListener = () => undefined,
): Promise<SimulationReport> {
  const service = findService(REPLAY_SERVICE_ID);
  if (service === undefined) {
    throw new Error(`runSimulation: no service ${REPLAY_SERVICE_ID}`);
  }
  const tally = new SimulationTally();
  tally.skipBeforeReplay('no-authored-on', index.skippedOrders['no-authored-on']);
  tally.skipBeforeReplay('no-patient', index.skippedOrders['no-patient']);
  const total = index.counts.oxygenOrders;
  // The facts depend on the policy only through its freshness and trend windows; when the two agree
  // (as they do when only targets or thresholds change), each order's record is read once.
  const shareFacts = sameFactsInputs(baseline.policy, proposed.policy);
  const collect = fullCollector();
  collect(); // what indexing left behind
  let done = 0;
  for (const order of index.orders()) {
    done += 1;
    if (done % COLLECT_EVERY_ORDERS === 0) {
      collect();
    }
    if (done % YIELD_EVERY_ORDERS === 0) {
      // Awaiting only promises never returns to the event loop, and V8's foreground tasks (finishing a
      // major garbage collection among them) wait for it: without this the heap grows with the export.
      await new Promise<void>((resolve) => setImmediate(resolve));
    }
    if (!idsAreValid(order)) {
      tally.skip('request-not-valid');
      onProgress(done, total);
      continue;
    }
    const record = recordAsOf(index, order);
    const context = orderSignContext(order);
    const gathered = await gather({ context, prefetch: orderSignPrefetch(record) }, service.prefetch);
    if (gathered.kind === 'unavailable') {
      tally.skip('required-data-missing');
      onProgress(done, total);
      continue;
    }
    const now = new Date(order.authoredMs);
    const draftOrders = context.draftOrders;
    const readFacts = (p: SimulationPolicy): Facts =>
      extractFacts({ hook: 'order-sign', draftOrders, selections: undefined, data: gathered.data }, p.policy, now);
    const evaluate = (facts: Facts, p: SimulationPolicy): Replayed => {
      const { findings } = evaluateOrder(facts, p.policy, { hook: 'order-sign', now });
      return { advice: findings.map((f) => ({ ruleId: f.ruleId, indicator: f.indicator })), ward: facts.encounterUnit };
    };
    let before: Replayed;
    let after: Replayed;
    try {
      const baselineFacts = readFacts(baseline);
      before = evaluate(baselineFacts, baseline);
      after = evaluate(shareFacts ? baselineFacts : readFacts(proposed), proposed);
    } catch {
      tally.skip('evaluation-failed');
      onProgress(done, total);
      continue;
    }
    tally.add({
      orderReference: order.reference,
      authoredOn: now.toISOString(),
      ward: before.ward,
      spo2Percent: spo2AtOrderTime(record.observations, order.authoredMs, baseline.policy.freshness.vitalSignsMinutes),
      baseline: before.advice,
      proposed: after.advice,
    });
    onProgress(done, total);
  }
  return {
    baseline: policyLabel(baseline),
    proposed: policyLabel(proposed),
    tally: tally.snapshot(),
    malformedLines: { count: index.problems.count, first: index.problems.first },
  };
}
