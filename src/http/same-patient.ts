import type { FhirResource } from '../fhir/gathered-data.js';

/**
 * Whether a resource is about the hook's patient. Advice built on another patient's saturations or
 * conditions is a wrong-patient hazard, so data that says it belongs to someone else is refused.
 * A resource that names no patient at all is kept: it cannot be told apart, and the client sent it
 * for this key.
 */
export function belongsToPatient(resource: FhirResource, patientId: string): boolean {
  if (resource.resourceType === 'Patient') {
    return resource.id === undefined || resource.id === patientId;
  }
  const holder = (resource['subject'] ?? resource['patient']) as { reference?: unknown } | undefined;
  const reference = holder?.reference;
  if (typeof reference !== 'string') {
    return true;
  }
  // Relative (`Patient/x`) or absolute (`https://.../Patient/x`), optionally with a version.
  const match = /(?:^|\/)Patient\/([A-Za-z0-9\-.]{1,64})(?:\/_history\/[^/]+)?$/.exec(reference);
  return match !== null && match[1] === patientId;
}
