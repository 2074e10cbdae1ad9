import type { CdsRequest } from '../../../src/cds/schemas.js';
import type { FhirResource, GatheredData } from '../../../src/fhir/gathered-data.js';
import { PATIENT_ID, patientAged, resetIds } from './fhir.js';

/**
 * One clinical scenario: a story, who is signing, the FHIR the EHR sends, and what a respiratory
 * consultant would expect the service to say, each expectation with its published source beside it.
 */

export type PointOfView = 'ward doctor' | 'respiratory therapist' | 'pharmacist';
export type Indicator = 'info' | 'warning' | 'critical';

export type Expectation =
  /** A card with this rule id for the order under check, at exactly this indicator. */
  | { readonly kind: 'fires'; readonly ruleId: string; readonly indicator: Indicator; readonly source: string }
  /** A card at this indicator from one of these rule ids (where the class's owner picks which). */
  | { readonly kind: 'fires-one-of'; readonly ruleIds: readonly string[]; readonly indicator: Indicator; readonly source: string }
  /** No card with this rule id. */
  | { readonly kind: 'silent'; readonly ruleId: string; readonly source: string }
  /** No card above this indicator (benign orders: at most 'info'). */
  | { readonly kind: 'at-most'; readonly indicator: Indicator; readonly source: string }
  /** Every suggested resource still holds these words, unchanged. */
  | { readonly kind: 'suggestions-keep'; readonly text: string; readonly source: string }
  /** No suggested resource still holds these words (a stale value left behind). */
  | { readonly kind: 'suggestions-lose'; readonly text: string; readonly source: string }
  /** No suggestion gives more oxygen (higher flow, FiO2 or device tier) than the draft. */
  | { readonly kind: 'no-more-oxygen'; readonly source: string }
  /** No suggestion gives less oxygen than the draft. */
  | { readonly kind: 'no-less-oxygen'; readonly source: string }
  /** No card summary or detail matches this pattern. */
  | { readonly kind: 'never-says'; readonly pattern: RegExp; readonly source: string }
  /** Every FiO2 figure in the card summaries is the same number (one device, one setting, one FiO2). */
  | { readonly kind: 'one-fio2'; readonly source: string }
  /** Every card's detail is at most this many lines (a side panel, not a report). */
  | { readonly kind: 'short-detail'; readonly maxLines: number; readonly source: string }
  /** At most one card with this rule id. */
  | { readonly kind: 'once'; readonly ruleId: string; readonly source: string }
  /** A card with this rule id whose summary, detail or suggestion labels match this pattern. */
  | { readonly kind: 'says'; readonly ruleId: string; readonly pattern: RegExp; readonly source: string };

export const fires = (ruleId: string, indicator: Indicator, source: string): Expectation => ({ kind: 'fires', ruleId, indicator, source });
export const firesOneOf = (ruleIds: readonly string[], indicator: Indicator, source: string): Expectation => ({ kind: 'fires-one-of', ruleIds, indicator, source });
export const suggestionsLose = (text: string, source: string): Expectation => ({ kind: 'suggestions-lose', text, source });
export const silent = (ruleId: string, source: string): Expectation => ({ kind: 'silent', ruleId, source });
export const atMost = (indicator: Indicator, source: string): Expectation => ({ kind: 'at-most', indicator, source });
export const suggestionsKeep = (text: string, source: string): Expectation => ({ kind: 'suggestions-keep', text, source });
export const noMoreOxygen = (source: string): Expectation => ({ kind: 'no-more-oxygen', source });
export const noLessOxygen = (source: string): Expectation => ({ kind: 'no-less-oxygen', source });
export const neverSays = (pattern: RegExp, source: string): Expectation => ({ kind: 'never-says', pattern, source });
export const oneFio2 = (source: string): Expectation => ({ kind: 'one-fio2', source });
export const shortDetail = (maxLines: number, source: string): Expectation => ({ kind: 'short-detail', maxLines, source });
export const says = (ruleId: string, pattern: RegExp, source: string): Expectation => ({ kind: 'says', ruleId, pattern, source });
export const once = (ruleId: string, source: string): Expectation => ({ kind: 'once', ruleId, source });

/** What a benign order must not raise: alert fatigue is a harm. */
export const NO_ALARM = atMost('info', 'common practice: a correct order at target needs no warning (alert fatigue)');

export interface ScenarioInput {
  readonly id: string;
  readonly story: string;
  readonly pov: PointOfView;
  /** The issue class or classic situation it exercises, for grouping the report. */
  readonly topic: string;
  /** True for an order a consultant would sign as it is: no warning or critical card allowed. */
  readonly benign?: boolean;
  /** patient-view: no drafts; the active oxygen order comes from `record` (use `onRecord`). */
  readonly hook?: 'order-sign' | 'order-select' | 'patient-view';
  /** The bundled policy to run under (default BTS 2017). */
  readonly policy?: 'bts-2017' | 'tsanz-2015';
  /** Age in years on the day; undefined: no birthDate on record. */
  readonly age: number | undefined;
  /** Builds the resources; called once per run, after the id counter is reset. */
  readonly build: () => {
    readonly drafts: readonly FhirResource[];
    readonly record?: readonly (FhirResource | readonly FhirResource[])[];
    /** Prefetch keys the EHR could not supply. */
    readonly missing?: readonly string[];
  };
  readonly expect: readonly Expectation[];
}

export interface Scenario extends ScenarioInput {
  readonly benign: boolean;
  readonly hook: 'order-sign' | 'order-select' | 'patient-view';
  readonly policy: 'bts-2017' | 'tsanz-2015';
}

export interface BuiltScenario {
  readonly serviceId: string;
  readonly request: CdsRequest;
  readonly data: GatheredData;
  readonly drafts: readonly FhirResource[];
}

export function scenario(input: ScenarioInput): Scenario {
  const expectations = input.benign === true ? [...input.expect, NO_ALARM] : input.expect;
  return {
    ...input,
    benign: input.benign ?? false,
    hook: input.hook ?? 'order-sign',
    policy: input.policy ?? 'bts-2017',
    expect: expectations,
  };
}

/** Turns a scenario into the hook call and the gathered prefetch, as the http layer hands them over. */
export function buildScenario(s: Scenario, replaceDrafts?: readonly FhirResource[]): BuiltScenario {
  resetIds();
  const built = s.build();
  const drafts = replaceDrafts ?? built.drafts;
  const record = (built.record ?? []).flat();
  const first = drafts[0];
  const isOrder = (r: FhirResource): boolean =>
    ['MedicationRequest', 'ServiceRequest', 'DeviceRequest'].includes(r.resourceType);
  // patient-view (CDS Hooks library): userId, patientId, encounterId?; no draft orders.
  const context: Record<string, unknown> =
    s.hook === 'patient-view'
      ? { userId: 'PractitionerRole/lbgh-resp-therapist-03', patientId: PATIENT_ID }
      : {
          userId: 'Practitioner/lbgh-prescriber-07',
          patientId: PATIENT_ID,
          draftOrders: { resourceType: 'Bundle', type: 'collection', entry: drafts.map((resource) => ({ resource })) },
          ...(s.hook === 'order-select' && first !== undefined
            ? { selections: [`${first.resourceType}/${String(first.id)}`] }
            : {}),
        };
  const request = {
    hook: s.hook,
    hookInstance: '0c5e7a42-9d1b-4f6a-8e3c-5b2d7f9a1e60',
    context,
  } as CdsRequest;
  const SERVICE = { 'order-sign': 'oxygen-order-sign', 'order-select': 'oxygen-order-select', 'patient-view': 'oxygen-titration-review' } as const;
  return {
    serviceId: SERVICE[s.hook],
    request,
    // On patient-view a suggestion updates an order on record: those are what it is compared with.
    drafts: s.hook === 'patient-view' ? record.filter(isOrder) : drafts,
    data: {
      patient: patientAged(s.age),
      observations: record.filter((r) => r.resourceType === 'Observation'),
      conditions: record.filter((r) => r.resourceType === 'Condition'),
      encounter: undefined,
      activeOrders: record.filter(isOrder),
      missing: built.missing ?? [],
    },
  };
}
