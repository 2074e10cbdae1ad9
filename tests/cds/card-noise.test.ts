import { describe, expect, it } from 'vitest';
import { oncePerPatient } from '../../src/core/engine.js';
import { cardUuid } from '../../src/cds/stable-uuid.js';
import type { Card } from '../../src/cds/schemas.js';
import { expectConformant } from '../helpers/card-conformance.js';
import { finding } from './support/card-inputs.js';
import { copyOf, draftResources, evaluateExample, loadExampleRequests, type RequestBody } from './support/examples.js';

/**
 * Cards that repeat or say nothing useful teach users to ignore cards (issue 6 class 12; common
 * practice: alert fatigue is a harm). Each block is a class of situation, tried on every invented
 * Larkspur Bay example in examples/.
 */

const examples = loadExampleRequests();
const signExamples = examples.filter(({ body }) => body['hook'] === 'order-sign');

const ruleOf = (card: Card): string => card.source.topic?.code ?? '';

function countByRule(cards: readonly Card[]): Map<string, number> {
  const counts = new Map<string, number>();
  for (const card of cards) counts.set(ruleOf(card), (counts.get(ruleOf(card)) ?? 0) + 1);
  return counts;
}

/** The request with its (first) draft order signed twice: a copy under a new id, the same order. */
function signedTwice(body: RequestBody): RequestBody {
  const twice = copyOf(body);
  const context = twice['context'] as { draftOrders: { entry: { fullUrl?: string; resource: Record<string, unknown> }[] } };
  const first = context.draftOrders.entry[0];
  if (first === undefined) throw new Error('example without a draft order');
  const copy = copyOf(first);
  copy.resource['id'] = `${String(copy.resource['id'])}-b`;
  delete copy.fullUrl;
  context.draftOrders.entry.push(copy);
  return twice;
}

describe('two drafts signed together', () => {
  describe.each(signExamples)('examples/$file with its order signed twice', ({ body }) => {
    it('states each patient-level card once and each order-level card once per order', async () => {
      const single = (await evaluateExample(body)).response.cards;
      const double = await evaluateExample(signedTwice(body));
      const hookInstance = String(body['hookInstance']);
      // A patient-level card's uuid is made without an order reference (src/cds/stable-uuid.ts).
      const isPatientLevel = (card: Card): boolean => card.uuid === cardUuid(hookInstance, ruleOf(card), undefined, 0);
      const before = countByRule(single);
      const after = countByRule(double.response.cards);
      for (const card of single) {
        // Orders signed together get one card about all of them (common practice: one list to reconcile).
        const aboutTheDraft = ruleOf(card) === 'duplicate-oxygen-order';
        const expected =
          isPatientLevel(card) || aboutTheDraft ? before.get(ruleOf(card)) : 2 * (before.get(ruleOf(card)) ?? 0);
        expect([ruleOf(card), after.get(ruleOf(card))]).toStrictEqual([ruleOf(card), expected]);
      }
      // The only new card is the one about the two orders themselves.
      expect([...after.keys()].filter((rule) => !before.has(rule))).toStrictEqual(
        before.has('duplicate-oxygen-order') || !after.has('duplicate-oxygen-order') ? [] : ['duplicate-oxygen-order'],
      );
      const uuids = double.response.cards.map((card) => card.uuid);
      expect(new Set(uuids).size).toBe(uuids.length);
      expectConformant(double.response);
    });
  });

  it('keeps one patient-level finding per rule whose values differ only by the order wording, the first (most severe)', () => {
    // evaluateOrder sorts critical first, so the first of a rule is the most severe.
    const patientLevel = { ...finding, ruleId: 'acute-hypercapnic-acidosis', orderReference: undefined, change: undefined };
    const findings = [
      { ...patientLevel, indicator: 'critical' as const, values: { orderDescription: 'Venturi mask 28 % at 4 L/min' } },
      { ...finding, orderReference: 'MedicationRequest/a' },
      { ...finding, orderReference: 'MedicationRequest/b' },
      { ...patientLevel, indicator: 'warning' as const, values: { orderDescription: 'Venturi 28 percent, 4 L/min' } },
    ];
    expect(oncePerPatient(findings)).toStrictEqual([findings[0], findings[1], findings[2]]);
  });
});

describe('the partial-check card', () => {
  const withoutKeys = (body: RequestBody, keys: readonly string[]): RequestBody => {
    const copy = copyOf(body);
    const prefetch = copy['prefetch'] as Record<string, unknown>;
    for (const key of keys) delete prefetch[key];
    return copy;
  };

  describe.each(examples.filter(({ body }) => body['hook'] !== 'patient-view'))('examples/$file', ({ body }) => {
    it('does not appear when only the optional encounter and orders-on-record keys are absent', async () => {
      const partial = await evaluateExample(withoutKeys(body, ['encounter', 'medicationRequests', 'serviceRequests']));
      expect(partial.response.cards.map(ruleOf)).not.toContain('required-data-unavailable');
    });
  });

  describe.each(examples.filter(({ body }) => body['hook'] === 'patient-view'))('examples/$file', ({ body }) => {
    it('appears when the orders on record are absent (they hold the order under review), not for the encounter alone', async () => {
      const noOrders = await evaluateExample(withoutKeys(body, ['medicationRequests', 'serviceRequests', 'deviceRequests']));
      expect(noOrders.response.cards.map(ruleOf)).toStrictEqual(['required-data-unavailable']);
      const noEncounter = await evaluateExample(withoutKeys(body, ['encounter']));
      expect(noEncounter.response.cards.map(ruleOf)).not.toContain('required-data-unavailable');
    });
  });

  it('appears, naming the data, when a key a finding reads could only be read in part', async () => {
    // A next link the offline gatherer cannot follow leaves the conditions search incomplete.
    const example = signExamples[0];
    expect(example).toBeDefined();
    const body = copyOf(example?.body ?? {});
    const prefetch = body['prefetch'] as Record<string, Record<string, unknown>>;
    const conditions = prefetch['conditions'] ?? {};
    conditions['link'] = [{ relation: 'next', url: 'https://fhir.larkspurbay.example/Condition?page=2' }];
    const result = await evaluateExample(body);
    const partial = result.response.cards.find((card) => ruleOf(card) === 'required-data-unavailable');
    expect(partial?.detail).toContain('conditions (incomplete');
  });
});

describe('order fields the service does not read', () => {
  /** Adds "1 {pill}" where each kind of draft may carry a count: the dose, or the service quantity. */
  function withPillDose(body: RequestBody): RequestBody {
    const copy = copyOf(body);
    for (const resource of draftResources(copy)) {
      const pill = { value: 1, unit: '{pill}', system: 'http://unitsofmeasure.org', code: '{pill}' };
      if (resource['resourceType'] === 'MedicationRequest') {
        for (const dosage of (resource['dosageInstruction'] as Record<string, unknown>[] | undefined) ?? []) {
          const rates = (dosage['doseAndRate'] as Record<string, unknown>[] | undefined) ?? [{}];
          dosage['doseAndRate'] = rates.map((rate) => ({ ...rate, doseQuantity: pill }));
        }
      } else if (resource['resourceType'] === 'ServiceRequest' && resource['quantityQuantity'] === undefined) {
        resource['quantityQuantity'] = pill;
      }
    }
    return copy;
  }

  describe.each(examples)('examples/$file with "1 {pill}" added to every draft', ({ body }) => {
    it('raises no set-aside card and gives the same advice', async () => {
      const plain = (await evaluateExample(body)).response.cards;
      const dosed = (await evaluateExample(withPillDose(body))).response.cards;
      expect(dosed.map(ruleOf)).not.toContain('data-set-aside');
      expect(dosed.map((card) => [ruleOf(card), card.summary])).toStrictEqual(plain.map((card) => [ruleOf(card), card.summary]));
    });
  });
});
