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

/** The least a JSON value must have to be treated as a FHIR resource. */
export const FhirResourceSchema = z.looseObject({
  resourceType: z.string().regex(/^[A-Z][A-Za-z]{1,63}$/),
  id: z.string().min(1).max(64).optional(),
});

/** Narrows an untrusted value to a FHIR resource, or undefined when it is not one. */
export function asFhirResource(value: unknown): FhirResource | undefined {
  const parsed = FhirResourceSchema.safeParse(value);
  if (!parsed.success) {
    return undefined;
  }
  // The schema checked the two typed keys; the rest stays unknown and is narrowed where it is read.
  return value as FhirResource;
}
