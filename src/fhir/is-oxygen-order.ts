import { OXYGEN_CODES, SYSTEMS } from './codes.js';
import type { FhirResource } from './gathered-data.js';
import { arrayAt, hasCode, isObject, objectAt, stringAt, wordsOf } from './json.js';
import { readDeviceText } from './read-device-text.js';

/**
 * Decides whether a request resource is an oxygen order. CDS Hooks does not fix which request type
 * carries oxygen (cds-hooks.md §4), so three are accepted: a MedicationRequest for the medication
 * oxygen, a ServiceRequest for oxygen therapy, and a DeviceRequest for an oxygen delivery device.
 * Status is not checked here: order-sign may carry re-signed orders that are no longer draft.
 */

export type OrderResourceType = 'MedicationRequest' | 'ServiceRequest' | 'DeviceRequest';

const OXYGEN_WORD = /\b(?:oxygen|O2)\b/i;
/** Words that make "oxygen" a measurement rather than a therapy, unless therapy words are there too. */
const MEASUREMENT_WORD = /\boxygen saturation\b|\boximetry\b|\bO2 sat/i;
const THERAPY_WORD = /therap|administ|supplement|deliver/i;

function wordsSayOxygenTherapy(words: readonly string[]): boolean {
  return words.some((w) => OXYGEN_WORD.test(w) && (!MEASUREMENT_WORD.test(w) || THERAPY_WORD.test(w)));
}

function isOxygenConcept(concept: unknown): boolean {
  return (
    hasCode(concept, SYSTEMS.snomed, OXYGEN_CODES.oxygenSubstance) ||
    hasCode(concept, SYSTEMS.rxnorm, OXYGEN_CODES.oxygenRxnorm) ||
    wordsSayOxygenTherapy(wordsOf(concept))
  );
}

/** A `#id` medicationReference resolved against the resource's contained Medication. */
function containedMedicationCode(resource: FhirResource, reference: string | undefined): unknown {
  if (reference === undefined || !reference.startsWith('#')) {
    return undefined;
  }
  const medication = arrayAt(resource, 'contained').find(
    (c) => isObject(c) && c['resourceType'] === 'Medication' && c['id'] === reference.slice(1),
  );
  return objectAt(medication, 'code');
}

function isOxygenMedication(resource: FhirResource): boolean {
  if (isOxygenConcept(resource['medicationCodeableConcept'])) {
    return true;
  }
  const ref = objectAt(resource, 'medicationReference');
  const display = stringAt(ref, 'display');
  return (
    (display !== undefined && wordsSayOxygenTherapy([display])) ||
    isOxygenConcept(containedMedicationCode(resource, stringAt(ref, 'reference')))
  );
}

function isOxygenService(resource: FhirResource): boolean {
  const code = resource['code'];
  return (
    hasCode(code, SYSTEMS.snomed, OXYGEN_CODES.oxygenTherapy) ||
    hasCode(code, SYSTEMS.snomed, OXYGEN_CODES.oxygenByNasalCannula) ||
    wordsSayOxygenTherapy(wordsOf(code))
  );
}

function isOxygenDevice(resource: FhirResource): boolean {
  const words = [...wordsOf(resource['codeCodeableConcept'])];
  const display = stringAt(objectAt(resource, 'codeReference'), 'display');
  if (display !== undefined) {
    words.push(display);
  }
  return wordsSayOxygenTherapy(words) || words.some((w) => readDeviceText(w) !== undefined);
}

/** The order type when `resource` is an oxygen order, otherwise undefined. */
export function oxygenOrderType(resource: FhirResource): OrderResourceType | undefined {
  switch (resource.resourceType) {
    case 'MedicationRequest':
      return isOxygenMedication(resource) ? 'MedicationRequest' : undefined;
    case 'ServiceRequest':
      return isOxygenService(resource) ? 'ServiceRequest' : undefined;
    case 'DeviceRequest':
      return isOxygenDevice(resource) ? 'DeviceRequest' : undefined;
    default:
      return undefined;
  }
}
