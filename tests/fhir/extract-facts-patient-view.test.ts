import { describe, expect, it } from 'vitest';
import { extractFacts } from '../../src/fhir/extract-facts.js';
import type { GatheredData } from '../../src/fhir/gathered-data.js';
import {
  NOW,
  btsPolicy,
  gathered,
  minutesAgo,
  observation,
  oxygenDeviceRequest,
  oxygenMedicationRequest,
  oxygenServiceRequest,
} from './helpers/larkspur-bay.js';

// patient-view (CDS Hooks library): no draft orders; the active oxygen order on record is the subject.
// Invented Larkspur Bay orders; times are minutes before NOW.
const policy = btsPolicy();

function view(data: GatheredData) {
  return extractFacts({ hook: 'patient-view', draftOrders: undefined, selections: undefined, data }, policy, NOW);
}

const older = oxygenMedicationRequest('mr-old', { status: 'active', authoredOn: minutesAgo(3000), dosageInstruction: [{ text: '4L NC, target SpO2 94-98%' }] });
const newer = oxygenServiceRequest('sr-new', { status: 'active', authoredOn: minutesAgo(600), patientInstruction: 'Oxygen 2 L/min via nasal cannulae. Target SpO2 94-98%' });
const held = oxygenDeviceRequest('dr-held', 'Venturi 28%', { status: 'on-hold', authoredOn: minutesAgo(60) });
const stopped = oxygenServiceRequest('sr-done', { status: 'completed', authoredOn: minutesAgo(30) });

describe('extractFacts on patient-view', () => {
  it('makes the newest active oxygen order the subject, and lists every active or held one on record', () => {
    const facts = view(gathered({ activeOrders: [older, newer, held, stopped] }));
    expect(facts.orders.map((o) => [o.reference, o.isSubject, o.flowLPerMin])).toStrictEqual([['ServiceRequest/sr-new', true, 2]]);
    expect(facts.activeOrders.map((o) => o.reference)).toStrictEqual([
      'MedicationRequest/mr-old',
      'ServiceRequest/sr-new',
      'DeviceRequest/dr-held',
    ]);
  });

  it('has no subject when no oxygen order is active (an order on hold gives no oxygen to titrate)', () => {
    const facts = view(gathered({ activeOrders: [held, stopped] }));
    expect(facts.orders).toStrictEqual([]);
    expect(facts.activeOrders.map((o) => o.reference)).toStrictEqual(['DeviceRequest/dr-held']);
  });

  it('counts an active order with no time as the oldest', () => {
    const untimed = oxygenServiceRequest('sr-untimed', { status: 'active', patientInstruction: 'Oxygen 3 L/min via nasal cannulae' });
    expect(view(gathered({ activeOrders: [untimed, older] })).orders[0]?.reference).toBe('MedicationRequest/mr-old');
  });

  it('keeps SpO2 readings for the 8 h look-back, beyond the 6 h trend window, but not older', () => {
    // titrationReview.lookbackHours 8 (local choice) > thresholds.oxygenNeedTrendMinutes 360.
    const observations = [
      observation('spo2-7h', '59408-5', 96, '%', minutesAgo(420)),
      observation('spo2-9h', '59408-5', 95, '%', minutesAgo(540)),
      observation('spo2-now', '59408-5', 97, '%', minutesAgo(5)),
    ];
    const onView = view(gathered({ activeOrders: [newer], observations }));
    expect(onView.trendReadings.spo2Percent.map((m) => m.value)).toStrictEqual([97, 96]);
    const onSign = extractFacts({ hook: 'order-sign', draftOrders: undefined, selections: undefined, data: gathered({ observations }) }, policy, NOW);
    expect(onSign.trendReadings.spo2Percent.map((m) => m.value)).toStrictEqual([97]);
  });
});
