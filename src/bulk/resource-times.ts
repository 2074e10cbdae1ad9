import { OBSERVATION_LOINC_CODES } from '../cds/services.js';
import { SYSTEMS } from '../fhir/codes.js';
import type { FhirResource } from '../fhir/gathered-data.js';
import { arrayAt, isObject, objectAt, stringAt } from '../fhir/json.js';

/**
 * What the export index needs to know of one resource, read without the engine: whose it is, when it
 * happened clinically and from when the record held it. Pure.
 *
 * "From when the record held it" matters for replay: a blood gas drawn at 09:15 and issued at 09:40
 * was not in the record of an order signed at 09:30, so an Observation is known from the later of its
 * effective time and `issued`. A Condition is known from `recordedDate`, else its onset.
 */

/** Milliseconds since the epoch of a FHIR date, dateTime or instant; undefined when absent or unreadable. */
export function fhirTimeMs(value: unknown): number | undefined {
  if (typeof value !== 'string' || !/^\d{4}/.test(value)) {
    return undefined;
  }
  const ms = Date.parse(value);
  return Number.isFinite(ms) ? ms : undefined;
}

/** One pattern per resource type referred to, made on first use rather than on every reference read. */
const REFERENCE_PATTERNS = new Map<string, RegExp>();

function referencePattern(type: string): RegExp {
  let pattern = REFERENCE_PATTERNS.get(type);
  if (pattern === undefined) {
    pattern = new RegExp(`(?:^|/)${type}/([A-Za-z0-9\\-.]{1,64})(?:/_history/[^/]+)?$`);
    REFERENCE_PATTERNS.set(type, pattern);
  }
  return pattern;
}

/** The id in a reference to `type` ("Patient/p1", or an absolute URL ending so); undefined otherwise. */
export function referencedId(reference: unknown, type: string): string | undefined {
  const text = stringAt(reference, 'reference');
  if (text === undefined) {
    return undefined;
  }
  return referencePattern(type).exec(text)?.[1];
}

/** The patient a resource belongs to: the Patient itself, else its subject (or patient) reference. */
export function patientOf(resource: FhirResource): string | undefined {
  if (resource.resourceType === 'Patient') {
    return resource.id;
  }
  return referencedId(resource['subject'], 'Patient') ?? referencedId(resource['patient'], 'Patient');
}

export interface ObservationTimes {
  /** When it was measured: effective[x] (the period's start), else issued. */
  readonly effectiveMs: number;
  /** From when the record held it: the later of effective and issued. */
  readonly knownMs: number;
}

export function observationTimes(resource: FhirResource): ObservationTimes | undefined {
  const issuedMs = fhirTimeMs(resource['issued']);
  const effectiveMs =
    fhirTimeMs(resource['effectiveDateTime']) ??
    fhirTimeMs(resource['effectiveInstant']) ??
    fhirTimeMs(stringAt(objectAt(resource, 'effectivePeriod'), 'start')) ??
    issuedMs;
  if (effectiveMs === undefined) {
    return undefined;
  }
  return { effectiveMs, knownMs: Math.max(effectiveMs, issuedMs ?? effectiveMs) };
}

const READ_LOINC: ReadonlySet<string> = new Set(OBSERVATION_LOINC_CODES);

/** Whether the service's observations prefetch (its LOINC code list) would return this Observation. */
export function matchesObservationPrefetch(resource: FhirResource): boolean {
  return arrayAt(objectAt(resource, 'code'), 'coding').some(
    (coding) => isObject(coding) && coding['system'] === SYSTEMS.loinc && READ_LOINC.has(String(coding['code'])),
  );
}

/** From when the record held a Condition; undefined when it carries no date (then always shown). */
export function conditionKnownMs(resource: FhirResource): number | undefined {
  return (
    fhirTimeMs(resource['recordedDate']) ??
    fhirTimeMs(resource['onsetDateTime']) ??
    fhirTimeMs(stringAt(objectAt(resource, 'onsetPeriod'), 'start'))
  );
}

/** When an order stopped being in force, when it says: its validity or occurrence period's end. */
export function orderEndMs(resource: FhirResource): number | undefined {
  const period =
    resource.resourceType === 'MedicationRequest'
      ? objectAt(objectAt(resource, 'dispenseRequest'), 'validityPeriod')
      : objectAt(resource, 'occurrencePeriod');
  return fhirTimeMs(stringAt(period, 'end'));
}
