import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { evaluateHook } from '../../src/cds/evaluate-hook.js';
import { parseHookRequest } from '../../src/cds/parse-hook-request.js';
import { requestMoment } from '../../src/cli/retime-request.js';
import { estimateDelivery } from '../../src/core/devices/index.js';
import { createGatherer } from '../../src/http/gather-data.js';
import { bundledPolicy } from './support/card-inputs.js';
import { loadRepositoryCards } from './support/load-cards.js';

/**
 * One device at one setting shows one FiO2 in one response (issue class 9), tried through the whole
 * hook path on the invented Larkspur Bay kyphoscoliosis example: nasal cannula 3 L/min ordered, SpO2,
 * respiratory rate 22/min and an O2 flow recorded at 09:20, an arterial gas at 06:40.
 */

const policy = bundledPolicy();
const templates = loadRepositoryCards();
const EXAMPLE = new URL('../../examples/order-sign-kyphoscoliosis-standard-target.json', import.meta.url);
const refuseFetch: typeof fetch = () => Promise.reject(new Error('tests never call FHIR servers'));

type Json = Record<string, unknown>;

function withRecordedFlow(body: Json, flowLPerMin: number): Json {
  const copy = structuredClone(body) as { prefetch: { observations: { entry: { resource: Json }[] } } };
  for (const entry of copy.prefetch.observations.entry) {
    if (entry.resource['id'] === 'flow-0001') {
      entry.resource['valueQuantity'] = { ...(entry.resource['valueQuantity'] as Json), value: flowLPerMin };
    }
  }
  return copy;
}

async function cardTexts(body: Json): Promise<string[]> {
  const parsed = parseHookRequest('oxygen-order-sign', body);
  if (parsed.kind !== 'ok') {
    throw new Error('example request does not parse');
  }
  const gather = createGatherer({
    fetch: refuseFetch,
    limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 },
  });
  const { fhirServer: _server, fhirAuthorization: _token, ...offline } = parsed.request;
  const gathered = await gather(offline, parsed.service.prefetch);
  if (gathered.kind !== 'gathered') {
    throw new Error('example prefetch is incomplete');
  }
  const now = requestMoment(body) ?? new Date();
  const result = evaluateHook({ serviceId: 'oxygen-order-sign', request: parsed.request, data: gathered.data }, { policy, templates, now });
  return result.response.cards.map((card) => `${card.summary}\n${card.detail ?? ''}`);
}

/** Every "0.32 (0.27–0.37)" figure of a response: an FiO2 with its range. */
function fio2Figures(texts: readonly string[]): Set<string> {
  const figures = new Set<string>();
  for (const text of texts) {
    for (const match of text.matchAll(/(0\.\d\d) \((0\.\d\d)–(0\.\d\d)\)/g)) {
      figures.add(match[0]);
    }
  }
  return figures;
}

const example = JSON.parse(readFileSync(EXAMPLE, 'utf8')) as Json;

describe('one FiO2 for one device and setting in one response', () => {
  it('shows the ordered cannula at one FiO2 on every card when the recorded flow is the ordered flow', async () => {
    const texts = await cardTexts(withRecordedFlow(example, 3));
    const figures = fio2Figures(texts);
    expect(figures.size).toBe(1);
    // check-values §2a: nasal cannula 3 L/min ≈ 0.32 ("rule of 4", FCCS; common practice / V2), ± 0.05
    const [figure] = [...figures];
    const estimate = Number(figure?.slice(0, 4));
    expect(Math.abs(estimate - 0.32)).toBeLessThanOrEqual(0.05);
    // every "FiO2 about 0.xx" in a summary is that same figure
    for (const text of texts) {
      for (const match of text.matchAll(/FiO2 about (0\.\d\d)/g)) {
        expect(Number(match[1])).toBe(estimate);
      }
    }
  });

  it('works out a different recorded flow at the same respiratory rate as the order', async () => {
    // The example records 2 L/min beside the ordered 3 L/min, and a rate of 22/min: two settings, two
    // figures, each the device model at 22/min, never one of them at an assumed resting rate.
    const texts = await cardTexts(example);
    const figures = fio2Figures(texts);
    const expected = [3, 2].map((flow) => {
      const outcome = estimateDelivery('nasal-cannula', { flowLPerMin: flow, respRatePerMin: 22 });
      if (outcome.kind !== 'ok') {
        throw new Error(outcome.reason);
      }
      const { estimate, low, high } = outcome.value.fio2;
      return `${estimate.toFixed(2)} (${low.toFixed(2)}–${high.toFixed(2)})`;
    });
    expect([...figures].sort()).toStrictEqual([...new Set(expected)].sort());
  });
});
