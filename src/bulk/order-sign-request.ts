import { uuidV5, CARD_UUID_NAMESPACE } from '../cds/stable-uuid.js';
import { OXYGEN_CODES, SYSTEMS } from '../fhir/codes.js';
import type { FhirResource } from '../fhir/gathered-data.js';
import { hasCode } from '../fhir/json.js';
import type { ExportIndex, IndexedOrder } from './export-index.js';

/**
 * The order-sign hook request an EHR would have sent when an exported oxygen order was signed: the
 * order as a draft in `context.draftOrders`, and the prefetch the service declares (src/cds/services.ts)
 * filled from the record as it stood at the order's authoredOn. Pure apart from `recordAsOf`, which
 * reads the index.
 */

export interface RecordAsOf {
  readonly patient: FhirResource | undefined;
  /** undefined: the order names no encounter; null: it names one the export does not hold. */
  readonly encounter: FhirResource | null | undefined;
  /** Newest first, at most 100 (the observations prefetch's `_count`). */
  readonly observations: readonly FhirResource[];
  readonly conditions: readonly FhirResource[];
  /** The patient's other oxygen orders in force at authoredOn. */
  readonly ordersInForce: readonly FhirResource[];
}

/** Reads from the index what the record held at the order's authored time. */
export function recordAsOf(index: ExportIndex, order: IndexedOrder): RecordAsOf {
  return {
    patient: index.patient(order.patientId),
    encounter: order.encounterId === undefined ? undefined : (index.encounter(order.encounterId) ?? null),
    observations: index.observationsAsOf(order.patientId, order.authoredMs),
    conditions: index.conditionsAsOf(order.patientId, order.authoredMs),
    ordersInForce: index.ordersInForce(order.patientId, order.authoredMs, order.reference).map((o) => o.resource),
  };
}

/** The hook instance of a replayed order: derived from it, so a replay gives the same card uuids. */
export function replayHookInstance(orderReference: string): string {
  return uuidV5(CARD_UUID_NAMESPACE, `simulate:${orderReference}`);
}

const searchset = (resources: readonly FhirResource[]): Readonly<Record<string, unknown>> => ({
  resourceType: 'Bundle',
  type: 'searchset',
  total: resources.length,
  entry: resources.map((resource) => ({ resource })),
});

/** An order in force then was active then, whatever the export says it is now. */
const asActive = (resource: FhirResource): FhirResource => ({ ...resource, status: 'active' });

/** The hook context of the order-sign call: the order as a draft, for its patient and encounter. */
export function orderSignContext(order: IndexedOrder): OrderSignReplayContext {
  return {
    userId: 'Practitioner/simulation',
    patientId: order.patientId,
    ...(order.encounterId === undefined ? {} : { encounterId: order.encounterId }),
    draftOrders: { resourceType: 'Bundle', type: 'collection', entry: [{ resource: { ...order.resource, status: 'draft' } }] },
  };
}

export type OrderSignReplayContext = {
  readonly userId: string;
  readonly patientId: string;
  readonly encounterId?: string;
  readonly draftOrders: { readonly resourceType: 'Bundle'; readonly type: 'collection'; readonly entry: readonly { readonly resource: FhirResource }[] };
};

/**
 * The prefetch the order services declare, filled from the record as it stood. The keys are the order
 * services' (patient, observations, conditions, encounter, medicationRequests, serviceRequests); the
 * serviceRequests search asks for oxygen therapy (SNOMED CT 57485005) only, so other ServiceRequests
 * in force are left out as that search would.
 */
export function orderSignPrefetch(record: RecordAsOf): Readonly<Record<string, unknown>> {
  const medicationRequests = record.ordersInForce.filter((r) => r.resourceType === 'MedicationRequest').map(asActive);
  const serviceRequests = record.ordersInForce
    .filter((r) => r.resourceType === 'ServiceRequest' && hasCode(r['code'], SYSTEMS.snomed, OXYGEN_CODES.oxygenTherapy))
    .map(asActive);
  return {
    ...(record.patient === undefined ? {} : { patient: record.patient }),
    observations: searchset(record.observations),
    conditions: searchset(record.conditions),
    ...(record.encounter === undefined ? {} : { encounter: record.encounter }),
    medicationRequests: searchset(medicationRequests),
    serviceRequests: searchset(serviceRequests),
  };
}

/** The whole request, as an EHR would have sent it (hook instance derived from the order). */
export function buildOrderSignRequest(order: IndexedOrder, record: RecordAsOf): Readonly<Record<string, unknown>> {
  return {
    hookInstance: replayHookInstance(order.reference),
    hook: 'order-sign',
    context: orderSignContext(order),
    prefetch: orderSignPrefetch(record),
  };
}
