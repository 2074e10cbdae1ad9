import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { factsPolicyInputs, sameFactsInputs } from '../../src/bulk/facts-policy-inputs.js';
import { parseHookRequest } from '../../src/cds/parse-hook-request.js';
import { findService } from '../../src/cds/services.js';
import { loadPolicyAndCards } from '../../src/config/load-files.js';
import type { Policy } from '../../src/core/policy.js';
import { extractFacts } from '../../src/fhir/extract-facts.js';
import { createGatherer } from '../../src/http/gather-data.js';

/**
 * `simulate` reads an order's facts once and evaluates both policies from them when the policies agree
 * on `factsPolicyInputs`. That is right only while `extractFacts` reads nothing else of the policy:
 * here every example hook call (order-sign, order-select, patient-view; invented Larkspur Bay patients)
 * is read with a policy that records each path read, and every path must lie inside those inputs.
 * Then the bundled policies, which differ in targets and thresholds but not in these inputs, must give
 * identical facts for every example.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const EXAMPLES = join(ROOT, 'examples');
/** The examples are written around 2026-11-30 09:30 UTC (invented admissions). */
const NOW = new Date('2026-11-30T09:45:00Z');
const SERVICE_BY_HOOK: Readonly<Record<string, string>> = {
  'order-sign': 'oxygen-order-sign',
  'order-select': 'oxygen-order-select',
  'patient-view': 'oxygen-titration-review',
};
const ALLOWED_PATHS = ['freshness', 'thresholds.oxygenNeedTrendMinutes', 'titrationReview.lookbackHours'];

const gather = createGatherer({
  fetch: () => Promise.reject(new Error('no FHIR server in this test')),
  limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 },
});

interface ExampleCall {
  readonly name: string;
  readonly input: Parameters<typeof extractFacts>[0];
}

async function exampleCalls(): Promise<ExampleCall[]> {
  const calls: ExampleCall[] = [];
  for (const file of readdirSync(EXAMPLES).filter((f) => f.endsWith('.json')).sort()) {
    const body = JSON.parse(readFileSync(join(EXAMPLES, file), 'utf8')) as { hook: string };
    const serviceId = SERVICE_BY_HOOK[body.hook];
    const service = serviceId === undefined ? undefined : findService(serviceId);
    if (serviceId === undefined || service === undefined) throw new Error(`${file}: no service for ${body.hook}`);
    const parsed = parseHookRequest(serviceId, body);
    if (parsed.kind !== 'ok') throw new Error(`${file} is not a valid request`);
    const gathered = await gather(parsed.request, service.prefetch);
    if (gathered.kind !== 'gathered') throw new Error(`${file}: prefetch incomplete`);
    const context = parsed.request.context as { draftOrders?: unknown; selections?: readonly string[] };
    calls.push({
      name: file,
      input: { hook: service.hook, draftOrders: context.draftOrders, selections: context.selections, data: gathered.data },
    });
  }
  return calls;
}

/** A copy of `value` that adds to `reads` the dot path of every property read below it. */
function recording<T extends object>(value: T, reads: Set<string>, path = ''): T {
  return new Proxy(value, {
    get(target, key, receiver) {
      const got: unknown = Reflect.get(target, key, receiver);
      if (typeof key !== 'string') return got;
      const here = path === '' ? key : `${path}.${key}`;
      reads.add(here);
      return typeof got === 'object' && got !== null ? recording(got, reads, here) : got;
    },
  });
}

async function policy(file: string): Promise<Policy> {
  const loaded = await loadPolicyAndCards({ policyPath: join(ROOT, 'policies', file), cardsDir: join(ROOT, 'cards') });
  if (loaded.kind !== 'ok') throw new Error(`${file} does not load`);
  return loaded.policy;
}

let calls: ExampleCall[];
let bts: Policy;
let tsanz: Policy;
let icu: Policy;

beforeAll(async () => {
  calls = await exampleCalls();
  [bts, tsanz, icu] = await Promise.all([policy('based-on-bts-2017.yaml'), policy('based-on-tsanz-2015.yaml'), policy('icu-conservative-example.yaml')]);
});

describe('the policy inputs of extractFacts', () => {
  it('covers every hook among the examples', () => {
    expect(new Set(calls.map((c) => c.input.hook))).toStrictEqual(new Set(['order-sign', 'order-select', 'patient-view']));
  });

  it('are the only parts of the policy extractFacts reads, on every example', () => {
    for (const call of calls) {
      const reads = new Set<string>();
      // A plain copy: a proxy over a frozen object may not hand out proxies for its properties.
      const watched = recording(structuredClone(bts), reads);
      extractFacts(call.input, watched, NOW);
      const outside = [...reads].filter((path) => !ALLOWED_PATHS.some((allowed) => path === allowed || path.startsWith(`${allowed}.`)));
      // Reading an object on the way to an allowed path is not a read of the object's other parts.
      const strictlyOutside = outside.filter((path) => !ALLOWED_PATHS.some((allowed) => allowed.startsWith(`${path}.`)));
      expect(strictlyOutside, call.name).toStrictEqual([]);
      expect(reads.size, call.name).toBeGreaterThan(0);
    }
  });

  it('agree between the bundled policies, whose targets differ, and so give the same facts', () => {
    expect(bts.targets.standard).not.toStrictEqual(tsanz.targets.standard);
    for (const other of [tsanz, icu]) {
      expect(sameFactsInputs(bts, other)).toBe(true);
      for (const call of calls) {
        expect(extractFacts(call.input, other, NOW), call.name).toStrictEqual(extractFacts(call.input, bts, NOW));
      }
    }
  });

  it('differ when a freshness window or the trend window differs', () => {
    const staler: Policy = { ...bts, freshness: { ...bts.freshness, vitalSignsMinutes: bts.freshness.vitalSignsMinutes + 60 } };
    const longerTrend: Policy = { ...bts, thresholds: { ...bts.thresholds, oxygenNeedTrendMinutes: bts.thresholds.oxygenNeedTrendMinutes * 2 } };
    const longerReview: Policy = { ...bts, titrationReview: { ...bts.titrationReview, lookbackHours: bts.titrationReview.lookbackHours + 4 } };
    for (const changed of [staler, longerTrend, longerReview]) {
      expect(sameFactsInputs(bts, changed)).toBe(false);
      expect(factsPolicyInputs(changed)).not.toStrictEqual(factsPolicyInputs(bts));
    }
    const targetsOnly: Policy = { ...bts, targets: { ...bts.targets, standard: { lowPercent: 92, highPercent: 96 } } };
    expect(sameFactsInputs(bts, targetsOnly)).toBe(true);
  });
});
