import type { FhirResource } from './gathered-data.js';
import { objectAt, objectsAt, stringAt } from './json.js';

/**
 * The unit the patient is in, for display: the current (else first named) `Encounter.location`'s
 * display, or else `serviceType.text`.
 */
export function readEncounterUnit(encounter: FhirResource | undefined): string | undefined {
  if (encounter === undefined || encounter.resourceType !== 'Encounter') {
    return undefined;
  }
  const locations = objectsAt(encounter, 'location');
  const named = (status?: string): string | undefined =>
    locations
      .filter((l) => status === undefined || stringAt(l, 'status') === status)
      .map((l) => stringAt(objectAt(l, 'location'), 'display'))
      .find((d) => d !== undefined);
  return named('active') ?? named() ?? stringAt(objectAt(encounter, 'serviceType'), 'text');
}
