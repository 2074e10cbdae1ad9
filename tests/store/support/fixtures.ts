import type { AdvisoryRecord, ClientIdentity, FeedbackInput, FeedbackLimits } from '../../../src/store/store.js';

/** Invented records at the fictional Larkspur Bay General Hospital; no real patient or client. */

export const EHR: ClientIdentity = { iss: 'https://ehr.larkspur-bay.example' };
export const EHR_NORTH: ClientIdentity = { iss: 'https://ehr.larkspur-bay.example', tenant: 'north-site' };
export const THEATRES: ClientIdentity = { iss: 'https://theatres.larkspur-bay.example' };

export const WARD_7 = 'Ward 7 (Respiratory)';
export const EMERGENCY = 'Emergency Department';

export const GENEROUS: FeedbackLimits = { maxRecordsPerClientPerDay: 10_000 };

/** A uuid-shaped card id that says which invented card it is, e.g. card(3). */
export function card(n: number): string {
  return `00000000-0000-4000-8000-${n.toString(16).padStart(12, '0')}`;
}

export function suggestion(n: number): string {
  return `00000000-0000-4000-9000-${n.toString(16).padStart(12, '0')}`;
}

export function advisory(n: number, overrides: Partial<AdvisoryRecord> = {}): AdvisoryRecord {
  return {
    cardUuid: card(n),
    suggestionUuids: [suggestion(n)],
    serviceId: 'oxygen-order-sign',
    hook: 'order-sign',
    hookInstance: `d1577c69-dfbe-44ad-ba6d-3e05e953b2ea-${String(n)}`,
    client: EHR,
    ruleId: 'spo2-above-target',
    ruleVersion: 1,
    indicator: 'warning',
    summary: 'SpO2 96 % is above the prescribed 88-92 % range',
    detail: 'Reading 96 % at 09:40 on 2 L/min nasal cannula.',
    workings: '| input | value |\n|---|---|\n| SpO2 | 96 % |',
    keyNumbers: [
      { name: 'SpO2', value: '96 %' },
      { name: 'target', value: '88-92 %' },
    ],
    policy: { id: 'bts-2017', version: '1.0.0', contentHash: 'sha256:0f3a9c' },
    unit: WARD_7,
    issuedAt: '2026-03-14T09:40:00.000Z',
    patientKey: 'a1b2c3d4e5f60718293a4b5c6d7e8f90',
    series: {
      spo2: [
        { at: '2026-03-14T08:40:00Z', spo2Percent: 93 },
        { at: '2026-03-14T09:40:00Z', spo2Percent: 96 },
      ],
      oxygen: [{ at: '2026-03-14T08:00:00Z', device: 'nasal cannula', flowLPerMin: 2 }],
      target: { lowPercent: 88, highPercent: 92 },
    },
    ...overrides,
  };
}

export function accepted(n: number, outcomeTimestamp: string, overrides: Partial<FeedbackInput> = {}): FeedbackInput {
  return {
    serviceId: 'oxygen-order-sign',
    cardUuid: card(n),
    outcome: 'accepted',
    acceptedSuggestionIds: [suggestion(n)],
    outcomeTimestamp,
    ...overrides,
  };
}

export function overridden(
  n: number,
  outcomeTimestamp: string,
  code = 'patient-specific-target',
  overrides: Partial<FeedbackInput> = {},
): FeedbackInput {
  return {
    serviceId: 'oxygen-order-sign',
    cardUuid: card(n),
    outcome: 'overridden',
    acceptedSuggestionIds: [],
    overrideReason: { system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason', code },
    outcomeTimestamp,
    ...overrides,
  };
}
