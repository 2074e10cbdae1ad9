import type { AuditOrder, AuditPatient } from '../core/audit/types.js';
import type { Policy } from '../core/policy.js';
import { asFhirResource, type FhirResource } from '../fhir/gathered-data.js';
import { objectAt, stringAt } from '../fhir/json.js';
import { oxygenOrderType } from '../fhir/is-oxygen-order.js';
import { readConditions } from '../fhir/read-conditions.js';
import { readEncounterUnit } from '../fhir/read-encounter.js';
import { readObservations } from '../fhir/read-observations.js';
import { readOrder } from '../fhir/read-order.js';
import { readPatient } from '../fhir/read-patient.js';

/**
 * Gathers the resources of a FHIR Bulk Data export (Patient, Encounter, Observation, Condition and
 * oxygen orders as MedicationRequest, ServiceRequest or DeviceRequest) by patient and reads each
 * patient into the audit's plain data with the service's own FHIR readers (src/fhir), so an order, a
 * reading, a gas or a condition means in the audit what it means on a card. Resources naming no
 * patient, and resource types the audit does not use, are counted and skipped. No I/O: resources are
 * fed in one at a time (`add`), from whatever reads the files.
 */

interface Gathered {
  patient: FhirResource | undefined;
  readonly encounters: FhirResource[];
  readonly observations: FhirResource[];
  readonly conditions: FhirResource[];
  readonly orders: FhirResource[];
}

export interface CollectedExport {
  readonly patients: readonly AuditPatient[];
  /** Resources that were not JSON resources, named no patient, or are of a type the audit does not read. */
  readonly skipped: number;
}

/** `Patient/123` from a reference such as `Patient/123` or `https://host/fhir/Patient/123`. */
function patientKey(reference: string | undefined): string | undefined {
  const match = reference === undefined ? null : /(?:^|\/)Patient\/([^/]+)$/.exec(reference);
  return match?.[1] === undefined ? undefined : `Patient/${match[1]}`;
}

function subjectKey(resource: FhirResource): string | undefined {
  return patientKey(stringAt(objectAt(resource, 'subject'), 'reference') ?? stringAt(objectAt(resource, 'patient'), 'reference'));
}

/** When the order ran until, if the record says: a period end on the order. */
function orderEnd(resource: FhirResource): string | undefined {
  return (
    stringAt(objectAt(resource, 'occurrencePeriod'), 'end') ??
    stringAt(objectAt(objectAt(resource, 'dispenseRequest'), 'validityPeriod'), 'end')
  );
}

/** Observation windows wide enough that every reading of the stay is kept, none "stale". */
function everything(policy: Policy): Policy['freshness'] {
  const forever = 1e12;
  return {
    ...policy.freshness,
    vitalSignsMinutes: forever,
    bloodGasMinutes: forever,
    haemoglobinHours: forever,
    previousHypercapniaDays: forever,
  };
}

function newestEncounter(encounters: readonly FhirResource[]): FhirResource | undefined {
  const start = (e: FhirResource): number => {
    const ms = Date.parse(stringAt(objectAt(e, 'period'), 'start') ?? '');
    return Number.isNaN(ms) ? Number.NEGATIVE_INFINITY : ms;
  };
  return [...encounters].sort((a, b) => start(b) - start(a))[0];
}

function readAuditOrder(resource: FhirResource): AuditOrder | undefined {
  const type = oxygenOrderType(resource);
  if (type === undefined) {
    return undefined;
  }
  const reference = `${resource.resourceType}/${resource.id ?? 'unnamed'}`;
  const recordedStatus = stringAt(resource, 'status');
  // A completed order in an export was given until it ended: read what it prescribed as if live,
  // since the reader takes an ended status to mean "stop oxygen".
  const { order } = readOrder({ ...resource, status: 'active' }, type, reference, false);
  return { order: { ...order, status: recordedStatus }, recordedStatus, endedAt: orderEnd(resource) };
}

function readPatientData(key: string, g: Gathered, policy: Policy, endOfExport: Date): AuditPatient {
  const encounter = newestEncounter(g.encounters);
  const period = objectAt(encounter, 'period');
  const admittedAt = stringAt(period, 'start');
  const ageAt = admittedAt === undefined || Number.isNaN(Date.parse(admittedAt)) ? endOfExport : new Date(admittedAt);
  const observations = readObservations(g.observations, everything(policy), 1e12, new Date(8.64e15));
  return {
    key,
    ward: readEncounterUnit(encounter),
    admittedAt,
    dischargedAt: stringAt(period, 'end'),
    ageYears: readPatient(g.patient, ageAt).ageYears,
    bmiKgPerM2: observations.bmiKgPerM2,
    orders: g.orders.map(readAuditOrder).filter((o): o is AuditOrder => o !== undefined),
    spo2Percent: observations.trendReadings.spo2Percent,
    fio2Fraction: observations.trendReadings.fio2Fraction,
    o2FlowLPerMin: observations.trendReadings.o2FlowLPerMin,
    bloodGases: observations.bloodGases,
    conditions: readConditions(g.conditions).conditions,
  };
}

/** Collects an export's resources, one at a time, into per-patient audit data. */
export class ExportCollector {
  readonly #byPatient = new Map<string, Gathered>();
  #skipped = 0;

  #gathered(key: string): Gathered {
    let g = this.#byPatient.get(key);
    if (g === undefined) {
      g = { patient: undefined, encounters: [], observations: [], conditions: [], orders: [] };
      this.#byPatient.set(key, g);
    }
    return g;
  }

  add(value: unknown): void {
    const resource = asFhirResource(value);
    if (resource === undefined) {
      this.#skipped += 1;
      return;
    }
    if (resource.resourceType === 'Patient' && resource.id !== undefined) {
      this.#gathered(`Patient/${resource.id}`).patient = resource;
      return;
    }
    const key = subjectKey(resource);
    const g = key === undefined ? undefined : this.#gathered(key);
    const list =
      resource.resourceType === 'Encounter'
        ? g?.encounters
        : resource.resourceType === 'Observation'
          ? g?.observations
          : resource.resourceType === 'Condition'
            ? g?.conditions
            : oxygenOrderType(resource) !== undefined
              ? g?.orders
              : undefined;
    if (list === undefined) {
      this.#skipped += 1;
      return;
    }
    list.push(resource);
  }

  /** The patients read, in key order; `endOfExport` dates an age when no admission is recorded. */
  finish(policy: Policy, endOfExport: Date): CollectedExport {
    const keys = [...this.#byPatient.keys()].sort();
    return {
      patients: keys.map((key) => readPatientData(key, this.#byPatient.get(key) as Gathered, policy, endOfExport)),
      skipped: this.#skipped,
    };
  }
}
