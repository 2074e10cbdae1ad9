import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { OrderChange } from '../../src/core/types.js';
import { planOrderChange, type ChangePlan } from '../../src/fhir/apply-change.js';
import type { FhirResource } from '../../src/fhir/gathered-data.js';
import { findFlowMentions, readSettingText } from '../../src/fhir/read-setting-text.js';
import { findTargetStatements } from '../../src/fhir/read-target-text.js';
import { TextReadings } from '../../src/fhir/text-readings.js';
import { oxygenDeviceRequest, oxygenMedicationRequest, oxygenServiceRequest } from './helpers/larkspur-bay.js';

/**
 * Planning the changes of one call shares what it reads in the order's words (a later suggestion plans
 * on the words an earlier one wrote). Sharing must never change a plan: each reading is the reader's
 * own, and a chain of plans made with one shared set of readings is the chain made without.
 */

// Invented order wording at Larkspur Bay: an ordered clause, then clauses that hold other numbers
// (contingency plans, escalation, review times, other SpO2 thresholds). Flows 1-6 L/min by nasal
// cannula (BTS 2017, Tables 2 and 4) and 5-10 L/min by face mask (BTS 2017, Table 2); the ranges are
// BTS 2017 Table 4 (88-92 %), BTS 2017 Tables 1-3 (94-98 %) and TSANZ 2015 (92-96 %).
const orderedClauses = fc.constantFrom(
  'O2 2L via nasal cannula',
  '2L NC, target SpO2 94-98%',
  'Oxygen via simple face mask at 5 L/min',
  'Venturi 28% at 4 L/min, target 88-92%',
  'keep sats above 92',
  'target SpO2 92–96 %',
  'Oxygen therapy',
  'FiO2 0.28 via Venturi, 4 L/min',
);
const otherClauses = fc.constantFrom(
  'if SpO2 below 85 % call doctor, increase to 4 L/min',
  'escalate to 15L NRB if SpO2 < 85%',
  'review in 1 h',
  'repeat ABG at 30-60 min',
  'max 6 L/min on the ward',
  'wean by 1 L/min steps',
);
const texts = fc
  .tuple(orderedClauses, fc.array(otherClauses, { maxLength: 3 }), fc.constantFrom('; ', '. ', ', '))
  .map(([first, others, joiner]) => [first, ...others].join(joiner));

const changes = fc.constantFrom<OrderChange>(
  { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } }, // BTS 2017 Table 4
  { kind: 'set-target', range: { lowPercent: 94, highPercent: 98 } }, // BTS 2017 Tables 1-3
  { kind: 'set-flow', flowLPerMin: 3 }, // nasal cannula 1-6 L/min (BTS 2017, Tables 2 and 4)
  { kind: 'set-device', device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, // BTS 2017 Table 4
  { kind: 'set-device', device: 'simple-face-mask', flowLPerMin: 5 }, // face mask 5-10 L/min (BTS 2017, Table 2)
  { kind: 'stop-oxygen' },
);

/** An order of each type whose words are spread over the slots the writer rewrites. */
const orders = fc
  .tuple(fc.constantFrom('MedicationRequest', 'ServiceRequest', 'DeviceRequest'), texts, texts, fc.option(texts, { nil: undefined }))
  .map(([type, main, second, note]): FhirResource => {
    const notes = note === undefined ? {} : { note: [{ text: note }] };
    if (type === 'MedicationRequest') {
      return oxygenMedicationRequest('mr-share', { dosageInstruction: [{ text: main, patientInstruction: second }], ...notes });
    }
    if (type === 'ServiceRequest') {
      return oxygenServiceRequest('sr-share', { patientInstruction: main, orderDetail: [{ text: second }], ...notes });
    }
    return oxygenDeviceRequest('dr-share', main, { parameter: [{ valueCodeableConcept: { text: second } }], ...notes });
  });

/** Plans each change on the resource the one before made, as a later card carries earlier changes. */
function planChain(order: FhirResource, chain: readonly OrderChange[], readings: TextReadings | undefined): ChangePlan[] {
  const plans: ChangePlan[] = [];
  let resource = order;
  for (const change of chain) {
    const plan = readings === undefined ? planOrderChange(resource, change) : planOrderChange(resource, change, { readings });
    plans.push(plan);
    if (plan.kind === 'changed') resource = plan.resource;
  }
  return plans;
}

function deepFreeze<T>(value: T): T {
  if (typeof value === 'object' && value !== null) {
    for (const inner of Object.values(value)) deepFreeze(inner);
    Object.freeze(value);
  }
  return value;
}

/** Every object and array inside a value, itself included. */
function objectsIn(value: unknown): object[] {
  if (typeof value !== 'object' || value === null) return [];
  return [value, ...Object.values(value).flatMap(objectsIn)];
}

describe('readings of order words shared by the plans of one call', () => {
  it("give the readers' own answers, read once per text", () => {
    fc.assert(
      fc.property(texts, (text) => {
        const readings = new TextReadings();
        const flows = readings.flows(text);
        expect(flows.all).toStrictEqual(findFlowMentions(text));
        expect(flows.ordered?.flowLPerMin).toBe(readSettingText(text, undefined).flowLPerMin);
        expect(flows.ordered?.range).toStrictEqual(readSettingText(text, undefined).flowRange);
        expect(readings.targetStatements(text)).toStrictEqual(findTargetStatements(text));
        // asked again, the same reading comes back rather than a new one
        expect(readings.flows(text)).toBe(flows);
        expect(readings.targetStatements(text)).toBe(readings.targetStatements(text));
      }),
      { numRuns: 200 },
    );
  });

  it('plan on frozen orders without writing to them, and never hand back a part of the input', () => {
    fc.assert(
      fc.property(orders, fc.array(changes, { minLength: 1, maxLength: 3 }), (order, chain) => {
        const before = structuredClone(order);
        const frozen = deepFreeze(order);
        // a write to the frozen order throws here (modules run in strict mode)
        const plans = planChain(frozen, chain, new TextReadings());
        expect(frozen).toStrictEqual(before);
        const inputParts = new Set(objectsIn(frozen));
        for (const plan of plans) {
          if (plan.kind === 'changed') expect(objectsIn(plan.resource).filter((o) => inputParts.has(o))).toStrictEqual([]);
        }
      }),
      { numRuns: 200 },
    );
  });

  it('never change a plan: a chain planned with shared readings equals the chain planned alone', () => {
    fc.assert(
      fc.property(orders, fc.array(changes, { minLength: 1, maxLength: 3 }), (order, chain) => {
        const shared = planChain(order, chain, new TextReadings());
        const alone = planChain(order, chain, undefined);
        expect(shared).toStrictEqual(alone);
        expect(JSON.stringify(shared)).toBe(JSON.stringify(alone));
      }),
      { numRuns: 200 },
    );
  });
});
