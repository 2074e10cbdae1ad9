import { z } from 'zod';

/**
 * zod schemas for the CDS Hooks 2.0 wire format (https://cds-hooks.hl7.org/2.0/), with the
 * order-sign and order-select contexts of the Hook Library STU1 and the patient-view context. Requests are read leniently
 * (unknown keys pass, so a newer client still works); responses are written strictly, so a typo in
 * a card field fails our own tests. Types are inferred from the schemas.
 */

const text = z.string().min(1);

/** A FHIR R4 `id` (http://hl7.org/fhir/R4/datatypes.html#id). Also keeps prefetch URLs safe. */
export const FHIR_ID_PATTERN = /^[A-Za-z0-9\-.]{1,64}$/;
/** A relative reference `Type/id`, as `userId` and `selections` carry (Hook Library STU1). */
export const RELATIVE_REFERENCE_PATTERN = /^[A-Z][A-Za-z]+\/[A-Za-z0-9\-.]{1,64}$/;

const fhirId = z.string().regex(FHIR_ID_PATTERN, 'must be a FHIR id (letters, digits, - and ., at most 64)');
const relativeReference = z
  .string()
  .regex(RELATIVE_REFERENCE_PATTERN, 'must be a relative reference such as ServiceRequest/123');

/** `extension` is reserved at every level and must be a JSON object (CDS Hooks 2.0 §Extensions). */
const ExtensionSchema = z.record(z.string(), z.unknown());

/**
 * `fhirAuthorization` (CDS Hooks 2.0 §FHIR Resource Access, #passing-the-access-token-to-the-cds-service).
 * The token is transient: never log or persist it.
 */
export const FhirAuthorizationSchema = z.object({
  access_token: text,
  token_type: z.literal('Bearer'),
  expires_in: z.number().int().nonnegative(),
  scope: text,
  subject: text,
  patient: fhirId.optional(),
});

const requestShape = {
  hook: text,
  // The spec says UUID; any non-empty id is accepted so an odd client still gets advice.
  hookInstance: z.string().min(1).max(256),
  fhirServer: z.url({ protocol: /^https?$/, error: 'must be an http(s) URL' }).optional(),
  fhirAuthorization: FhirAuthorizationSchema.optional(),
  context: z.record(z.string(), z.unknown()),
  // Values may be null: the client looked and found nothing (CDS Hooks 2.0 §Prefetch Template).
  prefetch: z.record(z.string(), z.unknown()).optional(),
  extension: ExtensionSchema.optional(),
};

function requireServerWithAuthorization(
  value: { fhirServer?: string | undefined; fhirAuthorization?: unknown },
  ctx: z.RefinementCtx,
): void {
  if (value.fhirAuthorization !== undefined && value.fhirServer === undefined) {
    ctx.addIssue({ code: 'custom', path: ['fhirServer'], message: 'is required when fhirAuthorization is present' });
  }
}

/** Run a cross-field check even when other fields failed, so one 400 lists every problem. */
const RUN_ON_ANY_OBJECT = {
  when: (payload: { readonly value: unknown }): boolean => typeof payload.value === 'object' && payload.value !== null,
};

/**
 * A service call body (CDS Hooks 2.0 §Calling a CDS Service, #http-request_1). `context` is checked
 * per hook with {@link OrderSignContextSchema} or {@link OrderSelectContextSchema}.
 */
export const CdsRequestSchema = z.object(requestShape).superRefine(requireServerWithAuthorization, RUN_ON_ANY_OBJECT);
export type CdsRequest = z.infer<typeof CdsRequestSchema>;

/**
 * `draftOrders`: a Bundle of request resources. Deliberately loose (Hook Library STU1 order-sign):
 * `Bundle.type` is often omitted by clients and re-signed orders are not `draft`, so neither is required.
 */
const DraftOrdersSchema = z.looseObject({
  resourceType: z.literal('Bundle'),
  entry: z.array(z.looseObject({ resource: z.looseObject({ resourceType: text }).optional() })).optional(),
});

/** order-sign context (Hook Library STU1, order-sign): userId, patientId, encounterId?, draftOrders. */
export const OrderSignContextSchema = z.looseObject({
  userId: relativeReference,
  patientId: fhirId,
  encounterId: fhirId.optional(),
  draftOrders: DraftOrdersSchema,
});
export type OrderSignContext = z.infer<typeof OrderSignContextSchema>;

function draftReferences(draftOrders: unknown): Set<string> {
  const references = new Set<string>();
  const entries = (draftOrders as { entry?: unknown } | undefined)?.entry;
  for (const entry of Array.isArray(entries) ? (entries as unknown[]) : []) {
    const resource = (entry as { resource?: { resourceType?: unknown; id?: unknown } } | null)?.resource;
    if (typeof resource?.resourceType === 'string' && typeof resource.id === 'string') {
      references.add(`${resource.resourceType}/${resource.id}`);
    }
  }
  return references;
}

/**
 * order-select context (Hook Library STU1, order-select): as order-sign plus `selections`, the
 * `Type/id` of the newly selected orders, each of which must point at a `draftOrders` entry.
 * The pointing check runs even when other fields failed, so one 400 names every problem.
 */
export const OrderSelectContextSchema = z
  .looseObject({ ...OrderSignContextSchema.shape, selections: z.array(relativeReference).min(1) })
  .superRefine(
    (context, ctx) => {
      const known = draftReferences(context.draftOrders);
      (context.selections as unknown[]).forEach((selection, index) => {
        if (typeof selection === 'string' && RELATIVE_REFERENCE_PATTERN.test(selection) && !known.has(selection)) {
          ctx.addIssue({ code: 'custom', path: ['selections', index], message: 'does not point to an entry in draftOrders' });
        }
      });
    },
    {
      when: (payload) => {
        const value = payload.value as { selections?: unknown; draftOrders?: unknown } | null;
        return typeof value === 'object' && value !== null && Array.isArray(value.selections);
      },
    },
  );
export type OrderSelectContext = z.infer<typeof OrderSelectContextSchema>;

/**
 * patient-view context (CDS Hooks Library, hook `patient-view`, hookVersion 1.0): `userId` (the user
 * opening the record: Practitioner, PractitionerRole, Patient or RelatedPerson), `patientId`, and
 * `encounterId` when the record is opened within an encounter. All three are prefetch tokens. There
 * are no draft orders: the active oxygen order is read from prefetch or the FHIR server.
 */
export const PatientViewContextSchema = z.looseObject({
  userId: relativeReference,
  patientId: fhirId,
  encounterId: fhirId.optional(),
});
export type PatientViewContext = z.infer<typeof PatientViewContextSchema>;

/** Whole request bodies with the hook's context, so issue paths read `context.selections.0`. */
export const OrderSignRequestSchema = z
  .object({ ...requestShape, hook: z.literal('order-sign'), context: OrderSignContextSchema })
  .superRefine(requireServerWithAuthorization, RUN_ON_ANY_OBJECT);
export const PatientViewRequestSchema = z
  .object({ ...requestShape, hook: z.literal('patient-view'), context: PatientViewContextSchema })
  .superRefine(requireServerWithAuthorization, RUN_ON_ANY_OBJECT);
export const OrderSelectRequestSchema = z
  .object({ ...requestShape, hook: z.literal('order-select'), context: OrderSelectContextSchema })
  .superRefine(requireServerWithAuthorization, RUN_ON_ANY_OBJECT);

/** Coding as CDS Hooks trims it (CDS Hooks 2.0 §Data Types › Coding). */
export const CodingSchema = z.strictObject({ code: text, system: text, display: text.optional() });
export type Coding = z.infer<typeof CodingSchema>;

/** Source (CDS Hooks 2.0 §Card Attributes › Source, #source). */
export const SourceSchema = z.strictObject({
  label: text,
  url: z.url().optional(),
  icon: z.url().optional(),
  topic: CodingSchema.optional(),
});

/** FHIR resource carried in an action: any R4 resource; its own schema is checked separately. */
const ActionResourceSchema = z.looseObject({ resourceType: text });

/** Action (CDS Hooks 2.0 §Action, #action); also the shape of `systemActions`. */
export const ActionSchema = z.strictObject({
  type: z.enum(['create', 'update', 'delete']),
  description: text,
  resource: ActionResourceSchema.optional(),
  resourceId: text.optional(),
});
export type Action = z.infer<typeof ActionSchema>;

/** Suggestion (CDS Hooks 2.0 §Suggestion, #suggestion). */
export const SuggestionSchema = z.strictObject({
  label: text,
  uuid: text.optional(),
  isRecommended: z.boolean().optional(),
  actions: z.array(ActionSchema).min(1).optional(),
});
export type Suggestion = z.infer<typeof SuggestionSchema>;

/** Link (CDS Hooks 2.0 §Link, #link). */
export const LinkSchema = z.strictObject({
  label: text,
  url: z.url(),
  type: z.enum(['absolute', 'smart']),
  appContext: text.optional(),
  autolaunchable: z.boolean().optional(),
});

/** Card (CDS Hooks 2.0 §Card Attributes, #card-attributes). `summary` must be under 140 characters. */
export const CardSchema = z.strictObject({
  uuid: text.optional(),
  summary: text.max(139),
  detail: text.optional(),
  indicator: z.enum(['info', 'warning', 'critical']),
  source: SourceSchema,
  suggestions: z.array(SuggestionSchema).min(1).optional(),
  selectionBehavior: z.enum(['at-most-one', 'any']).optional(),
  overrideReasons: z.array(CodingSchema.extend({ display: text })).min(1).optional(),
  links: z.array(LinkSchema).min(1).optional(),
  extension: ExtensionSchema.optional(),
});
export type Card = z.infer<typeof CardSchema>;

/** Service response (CDS Hooks 2.0 §CDS Service Response); `{"cards": []}` means no guidance. */
export const CdsResponseSchema = z.strictObject({
  cards: z.array(CardSchema),
  systemActions: z.array(ActionSchema).min(1).optional(),
});
export type CdsResponse = z.infer<typeof CdsResponseSchema>;

/** One discovery entry (CDS Hooks 2.0 §Discovery › Response, #response). */
export const CdsServiceSchema = z.strictObject({
  hook: text,
  title: text.optional(),
  description: text,
  id: text,
  prefetch: z.record(z.string(), text).optional(),
  usageRequirements: text.optional(),
  extension: ExtensionSchema.optional(),
});
export const DiscoveryResponseSchema = z.strictObject({ services: z.array(CdsServiceSchema) });
export type DiscoveryResponse = z.infer<typeof DiscoveryResponseSchema>;

/**
 * Feedback body (CDS Hooks 2.0 §Feedback, #feedback). `reason.display` is not required (clients send
 * code and system only), and an `overridden` outcome may come without any reason.
 */
export const FeedbackRequestSchema = z.object({
  feedback: z
    .array(
      z
        .object({
          card: text,
          outcome: z.enum(['accepted', 'overridden']),
          acceptedSuggestions: z.array(z.object({ id: text })).min(1).optional(),
          overrideReason: z.object({ reason: CodingSchema.optional(), userComment: z.string().optional() }).optional(),
          outcomeTimestamp: z.iso.datetime({ offset: true, error: 'must be an RFC 3339 date-time' }),
          extension: ExtensionSchema.optional(),
        })
        .superRefine((item, ctx) => {
          if (item.outcome === 'accepted' && item.acceptedSuggestions === undefined) {
            ctx.addIssue({ code: 'custom', path: ['acceptedSuggestions'], message: 'is required when outcome is accepted' });
          }
        }),
    )
    .min(1),
});
export type FeedbackRequest = z.infer<typeof FeedbackRequestSchema>;

export interface Issue {
  /** Dot path into the body, e.g. `context.selections.0`; `(root)` for the body itself. */
  readonly path: string;
  readonly message: string;
}

/** Turns a zod error into client-facing issues. Messages never contain the values sent. */
export function describeIssues(error: z.ZodError): Issue[] {
  return error.issues.map((issue) => ({
    path: issue.path.length === 0 ? '(root)' : issue.path.map(String).join('.'),
    message: issue.message,
  }));
}
