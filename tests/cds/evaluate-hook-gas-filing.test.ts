import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateHook } from '../../src/cds/evaluate-hook.js';
import type { FhirResource, GatheredData } from '../../src/fhir/gathered-data.js';
import { bundledPolicy } from './support/card-inputs.js';
import { draftOxygenOrder, kyphoscoliosisData, NOW, observation, orderSignRequest } from './support/hook-requests.js';
import { loadRepositoryCards } from './support/load-cards.js';

/**
 * One blood gas filed as several results must give the same advice as the same gas filed as one.
 * Invented Larkspur Bay General Hospital patient (kyphoscoliosis, 64) with a draft order for nasal
 * cannula 3 L/min, target 94-98 %, and an arterial gas 35 minutes ago.
 */

const policy = bundledPolicy();
const deps = { policy, templates: loadRepositoryCards(), now: NOW };
const order = draftOxygenOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%');
const MIN = 60_000;
const DRAWN_MS = NOW.getTime() - 35 * MIN;
const WINDOW = policy.freshness.bloodGasGroupingMinutes; // 10 min in the bundled policy (common practice)

interface Result {
  readonly id: string;
  readonly loinc: string;
  readonly value: number;
  readonly unit: string;
}

// Acidotic and hypercapnic: pH 7.26 < 7.35 (RCEM Learning normal range 7.35-7.45) with PaCO2 8.4 kPa
// >= 6 kPa (BTS 2017 clarification) is a respiratory acidosis (BTS 2017 Table 4; BTS/ICS 2016).
// HCO3 27.9 mmol/L agrees with pH 7.26 and 8.4 kPa (Henderson-Hasselbalch, from memory), so the
// reader's unit check keeps the pressures.
const ACIDOTIC: readonly Result[] = [
  { id: 'lb-ph-0064', loinc: '2744-1', value: 7.26, unit: '[pH]' },
  { id: 'lb-paco2-0064', loinc: '2019-8', value: 8.4, unit: 'kPa' },
  { id: 'lb-pao2-0064', loinc: '2703-7', value: 7.6, unit: 'kPa' },
  { id: 'lb-hco3-0064', loinc: '1960-4', value: 27.9, unit: 'mmol/L' },
];

function filed(result: Result, effectiveMs: number, extra: Record<string, unknown> = {}): FhirResource {
  return { ...observation(result.id, result.loinc, result.value, result.unit, new Date(effectiveMs).toISOString()), ...extra };
}

function dataWith(gas: readonly FhirResource[]): GatheredData {
  const base = kyphoscoliosisData();
  const vitals = base.observations.filter((o) => !ACIDOTIC.some((r) => r.id === o.id));
  return kyphoscoliosisData({ observations: [...vitals, ...gas] });
}

function evaluate(data: GatheredData) {
  return evaluateHook({ serviceId: 'oxygen-order-sign', request: orderSignRequest(order), data }, deps);
}

/** The advice: each card's rule id with its indicator. */
function advice(data: GatheredData): string[] {
  return evaluate(data)
    .response.cards.map((card) => `${card.source.topic?.code ?? '?'}:${card.indicator}`)
    .sort();
}

function acidosisCard(data: GatheredData) {
  return evaluate(data).response.cards.find((card) => card.source.topic?.code === 'acute-hypercapnic-acidosis');
}

describe('one blood gas filed as several results (evaluateHook)', () => {
  const together = dataWith(ACIDOTIC.map((r) => filed(r, DRAWN_MS)));

  it('raises the critical acidosis card when the results are filed together', () => {
    expect(acidosisCard(together)?.indicator).toBe('critical');
  });

  it('keeps the critical acidosis card when pH, PCO2, PO2 and HCO3 are filed seconds to minutes apart', () => {
    for (const offsetsMin of [[0, 0.25, 0.5, 0.75], [0, 2, 5, 9], [9, 0, 4, 2], [0, WINDOW, WINDOW, WINDOW]]) {
      const split = dataWith(ACIDOTIC.map((r, i) => filed(r, DRAWN_MS + (offsetsMin[i] ?? 0) * MIN)));
      expect(acidosisCard(split)?.indicator).toBe('critical');
      expect(advice(split)).toStrictEqual(advice(together));
    }
  });

  it('keeps it when the results share the effective time but differ in issued', () => {
    const split = dataWith(
      ACIDOTIC.map((r, i) => filed(r, DRAWN_MS, { issued: new Date(DRAWN_MS + (i * 7 + 3) * MIN).toISOString() })),
    );
    expect(acidosisCard(split)?.indicator).toBe('critical');
    expect(advice(split)).toStrictEqual(advice(together));
  });

  it('keeps it when one specimen ties results filed further apart than the window', () => {
    const split = dataWith(
      ACIDOTIC.map((r, i) => filed(r, DRAWN_MS + i * 11 * MIN, { specimen: { reference: 'Specimen/lb-abg-0064' } })),
    );
    expect(acidosisCard(split)?.indicator).toBe('critical');
  });

  it('keeps it when a panel lists the results in hasMember', () => {
    const panel: FhirResource = {
      resourceType: 'Observation',
      id: 'lb-abg-0064',
      status: 'final',
      code: { coding: [{ system: 'http://loinc.org', code: '24336-0' }] }, // arterial blood gas panel (check-values §6)
      effectiveDateTime: new Date(DRAWN_MS).toISOString(),
      hasMember: ACIDOTIC.map((r) => ({ reference: `Observation/${r.id}` })),
    };
    const split = dataWith([panel, ...ACIDOTIC.map((r, i) => filed(r, DRAWN_MS + ([0, 5, 20, 30][i] ?? 0) * MIN))]);
    expect(acidosisCard(split)?.indicator).toBe('critical');
  });

  it('keeps it when a lone PO2 of a later draw is filed after it', () => {
    const laterPo2: Result = { id: 'lb-pao2-0064b', loinc: '2703-7', value: 9.1, unit: 'kPa' };
    const split = dataWith([...ACIDOTIC.map((r) => filed(r, DRAWN_MS)), filed(laterPo2, DRAWN_MS + 25 * MIN)]);
    expect(acidosisCard(split)?.indicator).toBe('critical');
  });

  it('takes a corrected PCO2 over the first one filed for the same sample', () => {
    // Corrected to 5.6 kPa (< 6 kPa, BTS 2017) with HCO3 18.6 (agrees with pH 7.26 and 5.6 kPa by
    // Henderson-Hasselbalch, from memory): no hypercapnia, so no acidosis card.
    const issued = (min: number): string => new Date(DRAWN_MS + min * MIN).toISOString();
    const first = ACIDOTIC.map((r) => filed(r, DRAWN_MS, { issued: issued(1) }));
    const corrections = [
      filed({ id: 'lb-paco2-0064c', loinc: '2019-8', value: 5.6, unit: 'kPa' }, DRAWN_MS, { issued: issued(20), status: 'corrected' }),
      filed({ id: 'lb-hco3-0064c', loinc: '1960-4', value: 18.6, unit: 'mmol/L' }, DRAWN_MS, { issued: issued(20), status: 'corrected' }),
    ];
    expect(acidosisCard(dataWith(first))?.indicator).toBe('critical');
    expect(acidosisCard(dataWith([...corrections, ...first]))).toBeUndefined();
    expect(acidosisCard(dataWith([...first, ...corrections]))).toBeUndefined();
  });

  describe('property: the advice does not move when filing times move within the window', () => {
    // Gas values across the clinical range; pH 7.15-7.45 and PaCO2 4.5-10 kPa span normal (RCEM Learning)
    // to acidotic and hypercapnic (BTS 2017, BTS/ICS 2016). HCO3 is calculated from pH and PCO2
    // (Henderson-Hasselbalch with pK 6.1 and 0.0307 mmol/L/mmHg, from memory), as an analyser reports it.
    const gasArb = fc.record({
      ph: fc.integer({ min: 715, max: 745 }).map((x) => x / 100),
      paco2Kpa: fc.integer({ min: 45, max: 100 }).map((x) => x / 10),
      pao2Kpa: fc.integer({ min: 60, max: 140 }).map((x) => x / 10),
    });
    const timingArb = fc.array(
      fc.record({
        effectiveMin: fc.integer({ min: 0, max: WINDOW * 60 }).map((s) => s / 60),
        issuedMin: fc.integer({ min: 0, max: 120 }),
        order: fc.nat(),
      }),
      { minLength: 4, maxLength: 4 },
    );

    it('gives the same rule ids and indicators as the gas filed at one time', () => {
      fc.assert(
        fc.property(gasArb, timingArb, (gas, timing) => {
          const paco2MmHg = gas.paco2Kpa * 7.50062; // 1 kPa = 7.50062 mmHg (UCUM)
          const hco3 = Math.round(0.0307 * paco2MmHg * 10 ** (gas.ph - 6.1) * 10) / 10;
          const results: Result[] = [
            { id: 'g-ph', loinc: '2744-1', value: gas.ph, unit: '[pH]' },
            { id: 'g-pco2', loinc: '2019-8', value: gas.paco2Kpa, unit: 'kPa' },
            { id: 'g-po2', loinc: '2703-7', value: gas.pao2Kpa, unit: 'kPa' },
            { id: 'g-hco3', loinc: '1960-4', value: hco3, unit: 'mmol/L' },
          ];
          const first = Math.min(...timing.map((t) => t.effectiveMin));
          const oneTime = dataWith(results.map((r) => filed(r, DRAWN_MS + first * MIN)));
          const spread = dataWith(
            results
              .map((r, i) => {
                const t = timing[i] ?? { effectiveMin: 0, issuedMin: 0, order: 0 };
                const effectiveMs = DRAWN_MS + t.effectiveMin * MIN;
                return { o: filed(r, effectiveMs, { issued: new Date(effectiveMs + t.issuedMin * MIN).toISOString() }), k: t.order };
              })
              .sort((a, b) => a.k - b.k)
              .map((x) => x.o),
          );
          expect(advice(spread)).toStrictEqual(advice(oneTime));
        }),
        { numRuns: 60 },
      );
    });
  });
});
