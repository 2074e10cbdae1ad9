import { describe, expect, it } from 'vitest';
import { readOrderPurpose, type PurposeInputs } from '../../src/fhir/read-order-purpose.js';
import type { OrderPurpose } from '../../src/core/types.js';

const draft = (texts: readonly string[], extra: Partial<PurposeInputs> = {}): PurposeInputs => ({
  status: 'draft',
  doNotPerform: false,
  texts,
  flowLPerMin: undefined,
  ...extra,
});

// Invented order wordings at Larkspur Bay General Hospital; the purposes are those BTS 2017 names:
// titration to a target, comfort in terminal palliative care, weaning and stopping oxygen.
describe('readOrderPurpose', () => {
  it.each<[string, OrderPurpose]>([
    ['for comfort, no SpO2 target', 'comfort'],
    ['palliative: titrate to comfort, do not monitor sats', 'comfort'],
    ['O2 2L NC for comfort only', 'comfort'],
    ['End-of-life care: oxygen for symptom relief', 'comfort'],
    ['comfort measures, 2 L/min via nasal cannula', 'comfort'],
    ['Stop oxygen', 'stop'],
    ['discontinue O2', 'stop'],
    ['Cease supplemental oxygen today', 'stop'],
    ['O2 off, obs 4-hourly', 'stop'],
    ['wean to off', 'wean'],
    ['Wean O2 to room air as tolerated', 'wean'],
    ['weaning oxygen, target 94-98%', 'wean'],
    ['step down to air', 'wean'],
    ['room air', 'room-air'],
    ['Patient on RA, restart oxygen if SpO2 below 92%', 'room-air'],
    ['2L NC, target 94-98%', 'titrate'],
    ['Do not stop oxygen overnight', 'titrate'],
    ['never wean below 2 L/min without review', 'titrate'],
  ])('reads "%s" as %s', (text, purpose) => {
    const flow = /\b2\s?L\b/.test(text) ? 2 : undefined;
    expect(readOrderPurpose(draft([text], { flowLPerMin: flow }))).toBe(purpose);
  });

  it('reads a flow of 0 L/min as room air', () => {
    expect(readOrderPurpose(draft(['oxygen 0 L/min'], { flowLPerMin: 0 }))).toBe('room-air'); // common practice
  });

  it('does not read "on RA" as room air when a flow is ordered (it describes the patient)', () => {
    expect(readOrderPurpose(draft(['2L NC; SpO2 89% on RA'], { flowLPerMin: 2 }))).toBe('titrate');
  });

  it.each(['stopped', 'cancelled', 'completed', 'revoked', 'entered-in-error'])(
    'reads FHIR status %s as a stop',
    (status) => {
      // FHIR R4 request status value sets (MedicationRequest, ServiceRequest, DeviceRequest)
      expect(readOrderPurpose(draft(['2L NC, target 94-98%'], { status, flowLPerMin: 2 }))).toBe('stop');
    },
  );

  it('reads doNotPerform as a stop', () => {
    // FHIR R4 ServiceRequest.doNotPerform / MedicationRequest.doNotPerform
    expect(readOrderPurpose(draft(['oxygen'], { doNotPerform: true }))).toBe('stop');
  });
});
