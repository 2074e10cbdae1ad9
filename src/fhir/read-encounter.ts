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

/**
 * The references and identifiers of the encounter's current location, for unit overrides that match
 * on them rather than on a name: `location.reference` ("Location/lbgh-icu"), and the identifier as
 * "system|value" and as the value alone. The current location is an `active` entry; when none is
 * marked active, the entries with no status (status is optional in R4). Planned, reserved and
 * completed entries are not where the patient is now.
 */
export function readEncounterLocationIds(encounter: FhirResource | undefined): string[] {
  if (encounter === undefined || encounter.resourceType !== 'Encounter') {
    return [];
  }
  const locations = objectsAt(encounter, 'location');
  const active = locations.filter((l) => stringAt(l, 'status') === 'active');
  const current = active.length > 0 ? active : locations.filter((l) => stringAt(l, 'status') === undefined);
  const ids = new Set<string>();
  for (const l of current) {
    const location = objectAt(l, 'location');
    const reference = stringAt(location, 'reference');
    const identifier = objectAt(location, 'identifier');
    const value = stringAt(identifier, 'value');
    const system = stringAt(identifier, 'system');
    if (reference !== undefined) ids.add(reference);
    if (value !== undefined && system !== undefined) ids.add(`${system}|${value}`);
    if (value !== undefined) ids.add(value);
  }
  return [...ids];
}
