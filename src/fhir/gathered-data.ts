import { z } from 'zod';

/**
 * What the shell gathered for one hook call, before any reading: the prefetch results (or the
 * resources fetched in their place), flattened out of their Bundles. Everything in here is untrusted
 * JSON from the EHR; the readers in this folder narrow each field before using it.
 */
export interface GatheredData {
  readonly patient: FhirResource | undefined;
  /** Flattened from Bundles, all pages. */
  readonly observations: readonly FhirResource[];
  readonly conditions: readonly FhirResource[];
  readonly encounter: FhirResource | undefined;
  /** Active MedicationRequest/ServiceRequest/DeviceRequest on record. */
  readonly activeOrders: readonly FhirResource[];
  /** Prefetch keys that could not be had at all. */
  readonly missing: readonly string[];
}

/** Any FHIR R4 resource as JSON: only `resourceType` (and `id`, when present) is known to be a string. */
export type FhirResource = { readonly resourceType: string; readonly id?: string } & Readonly<
  Record<string, unknown>
>;

const RESOURCE_TYPE = /^[A-Z][A-Za-z]{1,63}$/;

/** The least a JSON value must have to be treated as a FHIR resource. */
export const FhirResourceSchema = z.looseObject({
  resourceType: z.string().regex(RESOURCE_TYPE),
  id: z.string().min(1).max(64).optional(),
});

/**
 * Narrows an untrusted value to a FHIR resource, or undefined when it is not one: the checks of
 * {@link FhirResourceSchema}, written out because every gathered resource passes through here.
 */
export function asFhirResource(value: unknown): FhirResource | undefined {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    return undefined;
  }
  const { resourceType, id } = value as { readonly resourceType?: unknown; readonly id?: unknown };
  if (typeof resourceType !== 'string' || !RESOURCE_TYPE.test(resourceType)) {
    return undefined;
  }
  if (id !== undefined && (typeof id !== 'string' || id.length < 1 || id.length > 64)) {
    return undefined;
  }
  // The two typed keys are checked; the rest stays unknown and is narrowed where it is read.
  return value as FhirResource;
}
