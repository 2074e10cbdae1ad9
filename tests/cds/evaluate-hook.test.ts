import { describe, expect, it } from 'vitest';
import { evaluateHook, missingTemplates } from '../../src/cds/evaluate-hook.js';
import { parseHookRequest } from '../../src/cds/parse-hook-request.js';
import { cardUuid } from '../../src/cds/stable-uuid.js';
import { RULES } from '../../src/core/rules/index.js';
import { expectConformant } from '../helpers/card-conformance.js';
import { bundledPolicy } from './support/card-inputs.js';
import {
  draftOxygenOrder,
  kyphoscoliosisData,
  NOW,
  observation,
  orderSelectRequest,
  orderSignRequest,
} from './support/hook-requests.js';
import { loadRepositoryCards } from './support/load-cards.js';

const policy = bundledPolicy();
const templates = loadRepositoryCards();
const deps = { policy, templates, now: NOW };
const standardOrder = draftOxygenOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%');
const TARGET_EXTENSION = 'https://oxygen-order-checker.example.org/fhir/StructureDefinition/target-oxygen-saturation';

function run(serviceId: string, request = orderSignRequest(standardOrder), data = kyphoscoliosisData()) {
  return evaluateHook({ serviceId, request, data }, deps);
}

describe('evaluateHook', () => {
  describe('kyphoscoliosis with PaCO2 6.7 kPa and a 94–98 % order (order-sign)', () => {
    const result = run('oxygen-order-sign');
    const cards = result.response.cards;
    const targetCard = cards.find((card) => card.source.topic?.code === 'target-above-hypercapnic-range');

    it('advises 88–92 % for a patient at risk of hypercapnic respiratory failure', () => {
      // BTS 2017 Table 4: chest wall deformity (e.g. kyphoscoliosis) → target 88–92 %
      expect(targetCard?.summary).toBe(
        'Target 94–98 % ordered, but this patient is at risk of hypercapnia: 88–92 % advised',
      );
      // PaCO2 6.7 kPa ≥ 6.0 kPa (BTS 2017 clarification: hypercapnia is PaCO2 ≥ 6 kPa) → critical
      expect(targetCard?.indicator).toBe('critical');
      expect(targetCard?.uuid).toBe(
        cardUuid('9d3c2b1a-6f5e-4d4c-8b3a-2f1e0d9c8b7a', 'target-above-hypercapnic-range', 'ServiceRequest/lb-o2-0064'),
      );
    });

    it('shows the FiO2 of about 0.32 from 3 L/min by nasal cannula', () => {
      // check-values.md §2a: nasal cannula 3 L/min ≈ FiO2 0.32 ("rule of 4"; common practice, ± 0.05)
      const match = /Delivered FiO2 \(estimate\): .* → \*\*(0\.\d\d) \((0\.\d\d)–(0\.\d\d)\)/.exec(targetCard?.detail ?? '');
      expect(match).not.toBeNull();
      expect(Number(match?.[1])).toBeCloseTo(0.32, 1);
    });

    it('asks for a repeat gas 30–60 minutes after a change', () => {
      // BTS 2017 Tables 2–4: repeat blood gas 30–60 min after starting or changing oxygen
      expect(targetCard?.detail).toContain('repeating the blood gas 30–60 min after any change to the oxygen');
    });

    it('offers a one-click update of the whole draft order to 88–92 %', () => {
      expect(targetCard?.selectionBehavior).toBe('at-most-one');
      const action = targetCard?.suggestions?.[0]?.actions?.[0];
      expect(targetCard?.suggestions?.[0]?.label).toBe('Change target to 88–92 %');
      expect(action?.type).toBe('update');
      const resource = action?.resource as Record<string, unknown>;
      expect(resource['id']).toBe('lb-o2-0064');
      expect(resource['requester']).toStrictEqual(standardOrder['requester']);
      expect(resource['patientInstruction']).toBe('Oxygen 3 L/min via nasal cannula, target SpO2 88-92%');
      expect(resource['extension']).toContainEqual(
        expect.objectContaining({ url: TARGET_EXTENSION, valueRange: expect.objectContaining({ low: expect.objectContaining({ value: 88 }) }) }),
      );
    });

    it('carries the earlier target change in a later suggestion for the same order', () => {
      // CDS Hooks 2.0 §Action: an update carries the whole resource, so a later suggestion built on
      // the draft as sent would put 94-98 % back if both were accepted.
      const onTwoLitres = kyphoscoliosisData();
      const withFlow = kyphoscoliosisData({
        observations: [...onTwoLitres.observations, observation('lb-flow-0064', '3151-8', 2, 'L/min', '2025-03-14T09:20:00Z')],
      });
      const later = run('oxygen-order-sign', orderSignRequest(standardOrder), withFlow).response.cards;
      // BTS 2017 Table 4: SpO2 93 % is above 88-92 % for this at-risk patient, so a step down is offered.
      const stepDown = later.find((card) => card.source.topic?.code === 'spo2-above-target');
      const action = stepDown?.suggestions?.[0]?.actions?.[0];
      expect(stepDown?.suggestions?.[0]?.label).toBe(
        'Reduce flow to 2 L/min (keeps: set the target SpO2 range to 88–92 %)',
      );
      const resource = action?.resource as Record<string, unknown>;
      expect(resource['patientInstruction']).toBe('Oxygen 2 L/min via nasal cannula, target SpO2 88-92%');
      expect(resource['extension']).toContainEqual(
        expect.objectContaining({ url: TARGET_EXTENSION, valueRange: expect.objectContaining({ high: expect.objectContaining({ value: 92 }) }) }),
      );
      expect(action?.description).toBe(
        'Set the target SpO2 range to 88–92 %; Set the oxygen flow to 2 L/min on the draft order.',
      );
    });

    it('keeps the inputs with times and references, the working and the cautions in the workings', () => {
      const full = evaluateHook({ serviceId: 'oxygen-order-sign', request: orderSignRequest(standardOrder), data: kyphoscoliosisData() }, { ...deps, workings: true });
      const index = full.response.cards.findIndex((card) => card.source.topic?.code === 'target-above-hypercapnic-range');
      const workings = full.workings?.[index];
      expect(workings?.cardUuid).toBe(targetCard?.uuid);
      // NOW is 09:45 UTC in March 2025, before the clocks change: GMT in Europe/London (tzdata).
      expect(workings?.markdown).toContain('- SpO2 93 % at 09:20 (25 min ago) (Observation/lb-spo2-0064)');
      expect(workings?.markdown).toContain('PCO2 6.7 kPa');
      expect(workings?.markdown).toContain('**Calculation**');
      expect(workings?.markdown).toContain('(ISO 80601-2-61)');
      // The same cards either way: the workings are extra, never a different answer.
      expect(full.response).toStrictEqual(result.response);
      expect(result.workings).toBeUndefined();
    });

    it('keeps the advisory-only and pulse oximetry cautions on the card itself', () => {
      for (const card of cards) {
        expect(card.detail).toContain('Advisory only');
        expect(card.detail).toContain('(ISO 80601-2-61)');
      }
    });

    it('reports the rule ids, the policy and no template problems', () => {
      expect(result.ruleIds).toStrictEqual([...new Set(cards.map((card) => card.source.topic?.code))]);
      expect(result.ruleIds).toContain('target-above-hypercapnic-range');
      expect([result.policyId, result.policyVersion]).toStrictEqual(['based-on-bts-2017', '1.0.0']);
      expect(result.problems).toStrictEqual([]);
    });

    it('answers with a conformant response', () => {
      expectConformant(result.response);
    });

    it('gives the same response for the same call', () => {
      expect(run('oxygen-order-sign')).toStrictEqual(result);
    });
  });

  describe('order-select', () => {
    const result = run('oxygen-order-select', orderSelectRequest(standardOrder));

    it('runs only the rules registered for order-select', () => {
      const selectRules = new Set(RULES.filter((rule) => rule.hooks.includes('order-select')).map((rule) => rule.id));
      expect(result.ruleIds.length).toBeGreaterThan(0);
      for (const id of result.ruleIds) {
        expect(selectRules.has(id)).toBe(true);
      }
      expect(result.ruleIds).toContain('target-above-hypercapnic-range');
      expectConformant(result.response);
    });
  });

  describe('a patient not at risk with a matching order', () => {
    it('returns no target card', () => {
      const data = kyphoscoliosisData({
        conditions: [],
        observations: [
          observation('lb-spo2-0065', '59408-5', 95, '%', '2025-03-14T09:20:00Z'),
          observation('lb-rr-0065', '9279-1', 16, '/min', '2025-03-14T09:20:00Z'),
        ],
      });
      const result = run('oxygen-order-sign', orderSignRequest(standardOrder), data);
      expect(result.ruleIds).not.toContain('target-above-hypercapnic-range');
      expectConformant(result.response);
    });
  });

  describe('draft bundles as clients send them (cds-hooks.md §12 items 5 and 6)', () => {
    const otherRequests = [
      { resourceType: 'NutritionOrder', id: 'lb-no-0064', status: 'draft', intent: 'order', patient: { reference: 'Patient/lb-pt-0064' }, dateTime: '2025-03-14T09:40:00Z' },
      { resourceType: 'VisionPrescription', id: 'lb-vp-0064', status: 'draft' },
    ];

    it('ignores request types it does not handle and a re-signed order that is not draft', () => {
      // Hook Library STU1 order-sign: re-signed orders are not draft; the type list is not comprehensive
      const resigned = { ...standardOrder, status: 'active' };
      const result = run('oxygen-order-sign', orderSignRequest(resigned, otherRequests));
      expect(result.ruleIds).toContain('target-above-hypercapnic-range');
      expect(result.response.cards.map((card) => card.suggestions?.[0]?.actions?.[0]?.resource?.['id']).filter(Boolean)).toStrictEqual([
        'lb-o2-0064',
      ]);
      expectConformant(result.response);
    });

    it('advises on the selected order only, using the other drafts as context', () => {
      // Hook Library STU1 order-select: guidance focuses on the selections
      const second = { ...draftOxygenOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%'), id: 'lb-o2-0065' };
      const request = orderSelectRequest(second);
      const bundle = request.context['draftOrders'] as { entry: { resource: unknown }[] };
      bundle.entry.push({ resource: standardOrder });
      const result = run('oxygen-order-select', request);
      const target = result.response.cards.find((card) => card.source.topic?.code === 'target-above-hypercapnic-range');
      expect(target?.suggestions?.[0]?.actions?.[0]?.resource?.['id']).toBe('lb-o2-0065');
      expect(target?.detail).toContain('(Nasal cannula at 2 L/min)');
      expectConformant(result.response);
    });

    it('gives each of two oxygen orders signed together its own card and its own update', () => {
      const second = { ...draftOxygenOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%'), id: 'lb-o2-0065' };
      const result = run('oxygen-order-sign', orderSignRequest(standardOrder, [second]));
      const targets = result.response.cards.filter((card) => card.source.topic?.code === 'target-above-hypercapnic-range');
      expect(targets.map((card) => card.suggestions?.[0]?.actions?.[0]?.resource?.['id']).sort()).toStrictEqual([
        'lb-o2-0064',
        'lb-o2-0065',
      ]);
      // each card speaks of its own order
      for (const card of targets) {
        const id = String(card.suggestions?.[0]?.actions?.[0]?.resource?.['id']);
        expect(card.detail).toContain(`(Nasal cannula at ${id === 'lb-o2-0064' ? '3' : '2'} L/min)`);
      }
      expectConformant(result.response);
    });
  });

  describe('edge cases', () => {
    it('returns {"cards": []} when the draft holds no oxygen order and no rule applies', () => {
      const notOxygen = { resourceType: 'NutritionOrder', id: 'lb-no-0064', status: 'draft', intent: 'order', patient: { reference: 'Patient/lb-pt-0064' }, dateTime: '2025-03-14T09:40:00Z' };
      const data = kyphoscoliosisData({
        conditions: [],
        observations: [observation('lb-spo2-0066', '59408-5', 96, '%', '2025-03-14T09:20:00Z')],
      });
      const result = run('oxygen-order-sign', orderSignRequest(notOxygen), data);
      expect(result.response).toStrictEqual({ cards: [] });
      expect(result.ruleIds).toStrictEqual([]);
    });

    it('gives distinct uuids to every card and suggestion', () => {
      const uuids = run('oxygen-order-sign').response.cards.flatMap((card) => [
        card.uuid,
        ...(card.suggestions ?? []).map((s) => s.uuid),
      ]);
      expect(new Set(uuids).size).toBe(uuids.length);
    });

    it('throws on programmer errors: unknown service, mismatched hook, unvalidated context', () => {
      expect(() => run('no-such-service')).toThrow("evaluateHook: unknown service 'no-such-service'");
      expect(() => run('oxygen-order-select')).toThrow("answers order-select, not the request's hook");
      const bad = { ...orderSignRequest(standardOrder), context: { patientId: 'lb-pt-0064' } };
      expect(() => run('oxygen-order-sign', bad)).toThrow('the request context was not validated');
    });

    it('answers alike whether or not parseHookRequest validated the context first', () => {
      const request = orderSignRequest(standardOrder);
      const parsed = parseHookRequest('oxygen-order-sign', JSON.parse(JSON.stringify(request)));
      expect(parsed.kind).toBe('ok');
      const viaParse = parsed.kind === 'ok' ? run('oxygen-order-sign', parsed.request) : undefined;
      expect(viaParse).toStrictEqual(run('oxygen-order-sign', request));
      expect(viaParse?.response.cards.length).toBeGreaterThan(0);
    });

    it('checks a validated context again when it is sent with another hook', () => {
      const parsed = parseHookRequest('oxygen-order-sign', JSON.parse(JSON.stringify(orderSignRequest(standardOrder))));
      const context = parsed.kind === 'ok' ? parsed.request.context : {};
      const select = { ...orderSelectRequest(standardOrder), context };
      expect(() => run('oxygen-order-select', select)).toThrow('the request context was not validated');
    });

    it('throws when a rule that fires has no template', () => {
      const partial = new Map([...templates].filter(([id]) => id !== 'target-above-hypercapnic-range'));
      expect(() =>
        evaluateHook({ serviceId: 'oxygen-order-sign', request: orderSignRequest(standardOrder), data: kyphoscoliosisData() }, { ...deps, templates: partial }),
      ).toThrow("no card template for rule 'target-above-hypercapnic-range'");
    });
  });
});

describe('missingTemplates', () => {
  it('finds no rule without a template in the repository cards', () => {
    expect(missingTemplates(templates)).toStrictEqual([]);
  });

  it('names each registered rule that has no template', () => {
    const partial = new Map([...templates].filter(([id]) => id !== 'no-recent-spo2' && id !== 'data-set-aside'));
    expect(missingTemplates(partial)).toStrictEqual(
      RULES.map((rule) => rule.id).filter((id) => id === 'no-recent-spo2' || id === 'data-set-aside'),
    );
  });
});
