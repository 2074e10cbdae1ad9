import type { Policy } from '../core/policy.js';
import type { Facts, HookName, OxygenOrder, SetAsideNote } from '../core/types.js';
import { flattenResources, referenceMatches, referenceOf, type Entry } from './bundle-entries.js';
import type { FhirResource, GatheredData } from './gathered-data.js';
import { oxygenOrderType } from './is-oxygen-order.js';
import { readConditions } from './read-conditions.js';
import { readEncounterLocationIds, readEncounterUnit } from './read-encounter.js';
import { readObservations } from './read-observations.js';
import { readOrder } from './read-order.js';
import { readPatient } from './read-patient.js';

/**
 * Turns one hook call's draft orders and gathered FHIR data into the core's Facts. Pure: `now` comes
 * in, nothing is fetched or logged. Nothing a caller sends makes it throw: shapes it cannot read are
 * skipped, and values it will not use are listed in `setAside` with the reason.
 *
 * order-select: the orders named in `selections` are the subject; other drafts are context only.
 * order-sign: every oxygen order in the draft bundle is a subject.
 * patient-view: no draft; the newest active oxygen order on record is the subject (`readRecordOrders`).
 */

const ACTIVE_STATUSES = new Set(['active', 'on-hold']);

function flattenAll(resources: readonly unknown[], notes: SetAsideNote[]): FhirResource[] {
  const { entries, notes: found } = flattenResources(resources);
  notes.push(...found);
  return entries.map((e) => e.resource);
}

type Selections = readonly string[] | undefined;

function isSubject(hook: HookName, selections: Selections, entry: Entry, index: number): boolean {
  if (hook !== 'order-select' || !Array.isArray(selections)) {
    return true;
  }
  return selections.some((s) => typeof s === 'string' && referenceMatches(entry, index, s.trim()));
}

function readDrafts(input: Parameters<typeof extractFacts>[0], notes: SetAsideNote[]): OxygenOrder[] {
  const { entries, notes: found } = flattenResources(input.draftOrders);
  notes.push(...found);
  const orders: OxygenOrder[] = [];
  const seen = new Set<string>();
  for (const [index, entry] of entries.entries()) {
    const type = oxygenOrderType(entry.resource);
    const reference = referenceOf(entry, index);
    if (type === undefined || seen.has(reference)) {
      continue;
    }
    seen.add(reference);
    const subject = isSubject(input.hook, input.selections, entry, index);
    const read = readOrder(entry.resource, type, reference, subject);
    orders.push(read.order);
    notes.push(...read.notes);
  }
  return orders;
}

function readActiveOrders(resources: readonly FhirResource[], drafts: readonly OxygenOrder[]): OxygenOrder[] {
  const draftRefs = new Set(drafts.map((o) => o.reference));
  const { entries } = flattenResources(resources);
  const orders: OxygenOrder[] = [];
  for (const [index, entry] of entries.entries()) {
    const type = oxygenOrderType(entry.resource);
    const status = entry.resource['status'];
    const reference = referenceOf(entry, index);
    const isActive = typeof status === 'string' && ACTIVE_STATUSES.has(status);
    if (type === undefined || !isActive || draftRefs.has(reference)) {
      continue;
    }
    draftRefs.add(reference);
    // Orders already on the record are context for the duplicate check; their reading notes would
    // only crowd the card, so they are not kept.
    orders.push(readOrder(entry.resource, type, reference, false).order);
  }
  return orders;
}

/**
 * patient-view: every active or on-hold oxygen order on record, and as the subject the newest one
 * that is `active` (an order on hold gives no oxygen to titrate). Orders with no time count as oldest.
 * The subject is also listed among the orders on record, where it is.
 */
function readRecordOrders(
  resources: readonly FhirResource[],
  notes: SetAsideNote[],
): { readonly subject: OxygenOrder | undefined; readonly onRecord: OxygenOrder[] } {
  const { entries } = flattenResources(resources);
  const onRecord: OxygenOrder[] = [];
  const seen = new Set<string>();
  let subject: { readonly order: OxygenOrder; readonly notes: readonly SetAsideNote[]; readonly at: number } | undefined;
  for (const [index, entry] of entries.entries()) {
    const type = oxygenOrderType(entry.resource);
    const status = entry.resource['status'];
    const reference = referenceOf(entry, index);
    if (type === undefined || typeof status !== 'string' || !ACTIVE_STATUSES.has(status) || seen.has(reference)) {
      continue;
    }
    seen.add(reference);
    // Read once: as a subject it differs only in `isSubject`.
    const read = readOrder(entry.resource, type, reference, true);
    onRecord.push({ ...read.order, isSubject: false });
    if (status !== 'active') {
      continue;
    }
    const authored = read.order.authoredOn === undefined ? Number.NaN : Date.parse(read.order.authoredOn);
    const at = Number.isNaN(authored) ? Number.NEGATIVE_INFINITY : authored;
    if (subject === undefined || at > subject.at) {
      subject = { order: read.order, notes: read.notes, at };
    }
  }
  notes.push(...(subject?.notes ?? []));
  return { subject: subject?.order, onRecord };
}

function arrayOrEmpty(value: unknown): readonly unknown[] {
  return Array.isArray(value) ? value : [];
}

export function extractFacts(
  input: {
    readonly hook: HookName;
    readonly draftOrders: unknown;
    readonly selections: readonly string[] | undefined;
    readonly data: GatheredData;
  },
  policy: Policy,
  now: Date,
): Facts {
  const notes: SetAsideNote[] = [];
  const data: Partial<GatheredData> = typeof input.data === 'object' && input.data !== null ? input.data : {};
  const patientView = input.hook === 'patient-view';
  const drafts = patientView ? [] : readDrafts(input, notes);
  const [patient] = flattenAll([data.patient], notes);
  const [encounter] = flattenAll([data.encounter], notes);
  const patientRead = readPatient(patient, now);
  const observationResources = flattenAll(arrayOrEmpty(data.observations), notes);
  // patient-view looks back over the titration review's window as well as the trend window.
  const trendMinutes = patientView
    ? Math.max(policy.thresholds.oxygenNeedTrendMinutes, policy.titrationReview.lookbackHours * 60)
    : policy.thresholds.oxygenNeedTrendMinutes;
  const observations = readObservations(observationResources, policy.freshness, trendMinutes, now);
  const conditions = readConditions(flattenAll(arrayOrEmpty(data.conditions), notes));
  const recordResources = flattenAll(arrayOrEmpty(data.activeOrders), notes);
  const record = patientView ? readRecordOrders(recordResources, notes) : undefined;
  const orders = record === undefined ? drafts : record.subject === undefined ? [] : [record.subject];

  return {
    patient: { ageYears: patientRead.ageYears, bmiKgPerM2: observations.bmiKgPerM2 },
    orders,
    activeOrders: record === undefined ? readActiveOrders(recordResources, orders) : record.onRecord,
    spo2Percent: observations.spo2Percent,
    fio2Fraction: observations.fio2Fraction,
    o2FlowLPerMin: observations.o2FlowLPerMin,
    respRatePerMin: observations.respRatePerMin,
    haemoglobinGPerDL: observations.haemoglobinGPerDL,
    trendReadings: observations.trendReadings,
    bloodGases: observations.bloodGases,
    historicBloodGases: observations.historicBloodGases,
    conditions: conditions.conditions,
    setAside: [...notes, ...patientRead.notes, ...observations.notes, ...conditions.notes],
    missingData: arrayOrEmpty(data.missing).filter((m): m is string => typeof m === 'string'),
    encounterUnit: readEncounterUnit(encounter),
    encounterLocationIds: readEncounterLocationIds(encounter),
  };
}
