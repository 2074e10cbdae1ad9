import type { OxygenOrder } from '../../../src/core/types.js';
import { readOrder } from '../../../src/fhir/read-order.js';
import { oxygenOrder } from '../facts-builder.js';

/**
 * The subject order as the FHIR reader reads it from an invented Larkspur Bay order whose dosage text
 * is `text` (by nasal cannula, with a coded flow of 2 L/min unless told otherwise, so only the words about the target and purpose vary).
 * Rule tests use it to check classes of wording end to end, not a hand-built targetNote.
 */
export function orderFromWords(
  text: string,
  extra: Record<string, unknown> = {},
  codedFlowLPerMin: number | 'none' = 2,
): OxygenOrder {
  const resource = {
    resourceType: 'MedicationRequest',
    id: 'o2-draft-1',
    status: 'draft',
    intent: 'order',
    medicationCodeableConcept: { text: 'Oxygen' },
    dosageInstruction: [
      {
        text,
        method: { text: 'Nasal cannula' },
        ...(codedFlowLPerMin === 'none'
          ? {}
          : { doseAndRate: [{ rateQuantity: { value: codedFlowLPerMin, unit: 'L/min', system: 'http://unitsofmeasure.org', code: 'L/min' } }] }),
      },
    ],
    ...extra,
  };
  const { order } = readOrder(resource, 'MedicationRequest', 'MedicationRequest/o2-draft-1', true);
  return oxygenOrder({
    ...order,
    authoredOn: oxygenOrder().authoredOn,
  });
}
