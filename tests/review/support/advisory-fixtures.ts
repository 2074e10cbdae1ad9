import type { AdvisoryWithFeedback, FeedbackRecord } from '../../../src/store/store.js';

/**
 * Invented advisories at the fictional Larkspur Bay General Hospital, for the review page tests.
 * Nothing here is a real patient; the patient key is a made-up pseudonym.
 */

export const DEMO_ISS = 'https://ehr.larkspur-bay.example';

export function feedbackRecord(overrides: Partial<FeedbackRecord> = {}): FeedbackRecord {
  return {
    id: 'fb-1',
    serviceId: 'oxygen-order-check',
    cardUuid: '7d3b9a52-0d0e-4f45-9a57-3e1c2f9b6a10',
    outcome: 'overridden',
    acceptedSuggestionIds: [],
    overrideReason: { system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason', code: 'ceiling-of-care' },
    outcomeTimestamp: '2026-07-12T13:20:00Z',
    client: { iss: DEMO_ISS },
    receivedAt: '2026-07-12T13:20:02Z',
    knownCard: true,
    ...overrides,
  };
}

export function advisory(overrides: Partial<AdvisoryWithFeedback> = {}): AdvisoryWithFeedback {
  return {
    cardUuid: '7d3b9a52-0d0e-4f45-9a57-3e1c2f9b6a10',
    suggestionUuids: [],
    serviceId: 'oxygen-order-check',
    hook: 'order-sign',
    hookInstance: 'd1f0c3a2-5b7e-4c21-9f0a-2e6b8c4d1a33',
    client: { iss: DEMO_ISS },
    ruleId: 'acute-hypercapnic-acidosis',
    ruleVersion: 2,
    indicator: 'critical',
    summary: 'Acute-on-chronic hypercapnic acidosis: pH 7.28, PCO2 8.1 kPa. Urgent review',
    detail: '**Based on:**\n- Blood gas pH 7.28\n\n_Advisory only._',
    workings: '**Inputs used**\n\n- SpO2 93 %\n\n**Calculation**\n\n- No calculation was needed for this advice.',
    keyNumbers: [
      { name: 'pH', value: '7.28' },
      { name: 'PCO2', value: '8.1 kPa' },
    ],
    policy: { id: 'bts-2017', version: '1.4.0', contentHash: 'sha256-3f1c9a' },
    unit: 'Ward 7 (Respiratory)',
    issuedAt: '2026-07-12T13:05:00Z',
    patientKey: 'pk-9c2e11ab',
    series: {
      spo2: [
        { at: '2026-07-12T11:00:00Z', spo2Percent: 95 },
        { at: '2026-07-12T12:00:00Z', spo2Percent: 93 },
      ],
      oxygen: [{ at: '2026-07-12T10:30:00Z', device: 'nasal cannula', flowLPerMin: 4 }],
      target: { lowPercent: 88, highPercent: 92 }, // BTS 2017, section 6 (at-risk range)
    },
    feedback: [feedbackRecord()],
    ...overrides,
  };
}

/** A payload that breaks out of a text node or a double-quoted attribute if not escaped. */
export function hostile(field: string): string {
  return `"><i data-f="${field}">'&`;
}

/** What `hostile(field)` looks like once escaped. */
export function escapedHostile(field: string): string {
  return `&quot;&gt;&lt;i data-f=&quot;${field}&quot;&gt;&#39;&amp;`;
}
