import { performance } from 'node:perf_hooks';
import { evaluateHook, readOrderContext } from '../src/cds/evaluate-hook.js';
import { parseHookRequest } from '../src/cds/parse-hook-request.js';
import type { CardTemplates } from '../src/cds/card-templates.js';
import type { CdsRequest } from '../src/cds/schemas.js';
import type { PrefetchKey } from '../src/cds/services.js';
import { ENV_DEFAULTS } from '../src/config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../src/config/load-files.js';
import { evaluateOrder } from '../src/core/engine.js';
import type { Policy } from '../src/core/policy.js';
import type { Facts, HookName } from '../src/core/types.js';
import { extractFacts } from '../src/fhir/extract-facts.js';
import type { GatheredData } from '../src/fhir/gathered-data.js';
import { createGatherer } from '../src/http/gather-data.js';
import type { HookExample } from './cases.js';

/**
 * The pure pipeline in-process, without HTTP: `evaluateHook` over data gathered from the prefetch,
 * timed against `JSON.parse` of the same request text (issue 9's yardstick) and `JSON.parse` +
 * `JSON.stringify` of it (the older one) in the same process and run. The four loops take turns in
 * rounds, so a slow spell on a shared machine falls on all of them.
 */

export interface LoadedFiles {
  readonly policy: Policy;
  readonly templates: CardTemplates;
}

export async function loadBundledFiles(): Promise<LoadedFiles> {
  const loaded = await loadPolicyAndCards({
    policyPath: ENV_DEFAULTS.OXYGEN_CHECKER_POLICY,
    cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR,
  });
  if (loaded.kind === 'invalid') {
    throw new Error(`the bundled policy or cards do not load:\n${formatLoadProblems(loaded.problems)}`);
  }
  return { policy: loaded.policy, templates: loaded.templates };
}

/** The prefetch is all there is: a fetch that is called means the example is not self-contained. */
const refuseFetch: typeof fetch = () => Promise.reject(new Error('the micro-benchmark calls no FHIR server'));
const gather = createGatherer({
  fetch: refuseFetch,
  limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 },
});

export interface PreparedCase {
  readonly example: HookExample;
  readonly hook: HookName;
  readonly request: CdsRequest;
  readonly prefetchTemplates: Readonly<Partial<Record<PrefetchKey, string>>>;
  readonly data: GatheredData;
}

function parseOrThrow(example: HookExample, text: string) {
  const parsed = parseHookRequest(example.serviceId, JSON.parse(text));
  if (parsed.kind !== 'ok') {
    throw new Error(`${example.name}: the request does not validate (${parsed.kind})`);
  }
  return parsed;
}

export async function prepareCase(example: HookExample): Promise<PreparedCase> {
  const parsed = parseOrThrow(example, example.body);
  const gathered = await gather(parsed.request, parsed.service.prefetch);
  if (gathered.kind !== 'gathered') {
    throw new Error(`${example.name}: required prefetch is missing`);
  }
  return {
    example,
    hook: parsed.service.hook,
    request: parsed.request,
    prefetchTemplates: parsed.service.prefetch,
    data: gathered.data,
  };
}

export function evaluatePrepared(prepared: PreparedCase, files: LoadedFiles, now: Date): number {
  const result = evaluateHook(
    { serviceId: prepared.example.serviceId, request: prepared.request, data: prepared.data },
    { policy: files.policy, templates: files.templates, now },
  );
  return result.response.cards.length;
}

/** What `evaluateHook` hands `extractFacts`, built on every call as it builds it. */
function factsInput(prepared: PreparedCase): Parameters<typeof extractFacts>[0] {
  const { draftOrders, selections } = readOrderContext(prepared.hook, prepared.request.context, prepared.data);
  return { hook: prepared.hook, draftOrders, selections, data: prepared.data };
}

function readFacts(prepared: PreparedCase, files: LoadedFiles, now: Date): Facts {
  return extractFacts(factsInput(prepared), files.policy, now);
}

/** The first phase of `evaluateHook` alone; the count only keeps the work from being optimised away. */
export function readFactsPrepared(prepared: PreparedCase, files: LoadedFiles, now: Date): number {
  return readFacts(prepared, files, now).setAside.length + 1;
}

/** Its first two phases, facts then rules, with the same policy and clock; returns the findings. */
export function runRulesPrepared(prepared: PreparedCase, files: LoadedFiles, now: Date): number {
  const facts = readFacts(prepared, files, now);
  return evaluateOrder(facts, files.policy, { hook: prepared.hook, now }).findings.length;
}

/** What the service does per call minus HTTP: parse, validate, gather, evaluate, serialise. */
export async function runWholePath(example: HookExample, files: LoadedFiles, now: Date): Promise<number> {
  const parsed = parseOrThrow(example, example.body);
  const gathered = await gather(parsed.request, parsed.service.prefetch);
  if (gathered.kind !== 'gathered') {
    throw new Error(`${example.name}: required prefetch is missing`);
  }
  const result = evaluateHook(
    { serviceId: example.serviceId, request: parsed.request, data: gathered.data },
    { policy: files.policy, templates: files.templates, now },
  );
  return JSON.stringify(result.response).length;
}

export function jsonRoundTrip(text: string): number {
  return JSON.stringify(JSON.parse(text)).length;
}

/** The issue-9 yardstick: `JSON.parse` of the request text alone. */
export function jsonParseOnly(text: string): number {
  const parsed = JSON.parse(text) as Record<string, unknown>;
  return typeof parsed === 'object' && parsed !== null ? 1 : 0;
}

export interface Timing {
  readonly iterations: number;
  readonly meanUs: number;
  readonly p50Us: number;
  readonly p99Us: number;
}

class Samples {
  readonly values: number[] = [];
  elapsedMs = 0;
  add(ms: number): void {
    this.values.push(ms);
    this.elapsedMs += ms;
  }
  timing(): Timing {
    const sorted = [...this.values].sort((a, b) => a - b);
    const at = (q: number): number => (sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))] ?? 0) * 1000;
    const count = sorted.length;
    return { iterations: count, meanUs: count === 0 ? 0 : (this.elapsedMs / count) * 1000, p50Us: at(0.5), p99Us: at(0.99) };
  }
}

export interface MicroSettings {
  /** Timed iterations per loop per case, split over `rounds`. */
  readonly iterations: number;
  readonly rounds: number;
  readonly warmupIterations: number;
  /** A loop stops early once it has used this much time in total. */
  readonly maxMsPerLoop: number;
}

export interface MicroResult {
  readonly name: string;
  readonly requestBytes: number;
  readonly cards: number;
  /** `JSON.parse` + `JSON.stringify` of the request text. */
  readonly baseline: Timing;
  /** `JSON.parse` of the request text alone; absent from runs before issue 9. */
  readonly parseOnly?: Timing;
  readonly evaluate: Timing;
  readonly wholePath: Timing;
  /** The phase pass (`runPhases`); absent from runs before the phases were timed. */
  readonly phases?: PhaseTimings;
}

/** Medians of one phase pass, all from the same rounds. */
export interface PhaseTimings {
  readonly parseOnly: Timing;
  /** `extractFacts` alone, as evaluateHook calls it. */
  readonly facts: Timing;
  /** `extractFacts` then `evaluateOrder`, as evaluateHook calls them. */
  readonly factsAndRules: Timing;
  readonly evaluate: Timing;
}

export async function runMicro(
  example: HookExample,
  files: LoadedFiles,
  now: Date,
  settings: MicroSettings,
): Promise<MicroResult> {
  const prepared = await prepareCase(example);
  let sink = 0;
  for (let i = 0; i < settings.warmupIterations; i += 1) {
    sink += jsonRoundTrip(example.body) + jsonParseOnly(example.body) + evaluatePrepared(prepared, files, now);
    sink += await runWholePath(example, files, now);
  }
  const baseline = new Samples();
  const parseOnly = new Samples();
  const evaluate = new Samples();
  const wholePath = new Samples();
  const perRound = Math.max(1, Math.ceil(settings.iterations / settings.rounds));
  for (let round = 0; round < settings.rounds; round += 1) {
    for (let i = 0; i < perRound && baseline.elapsedMs < settings.maxMsPerLoop; i += 1) {
      const start = performance.now();
      sink += jsonRoundTrip(example.body);
      baseline.add(performance.now() - start);
    }
    for (let i = 0; i < perRound && parseOnly.elapsedMs < settings.maxMsPerLoop; i += 1) {
      const start = performance.now();
      sink += jsonParseOnly(example.body);
      parseOnly.add(performance.now() - start);
    }
    for (let i = 0; i < perRound && evaluate.elapsedMs < settings.maxMsPerLoop; i += 1) {
      const start = performance.now();
      sink += evaluatePrepared(prepared, files, now);
      evaluate.add(performance.now() - start);
    }
    for (let i = 0; i < perRound && wholePath.elapsedMs < settings.maxMsPerLoop; i += 1) {
      const start = performance.now();
      sink += await runWholePath(example, files, now);
      wholePath.add(performance.now() - start);
    }
  }
  if (sink <= 0) {
    throw new Error('the timed loops produced nothing');
  }
  return {
    name: example.name,
    requestBytes: example.requestBytes,
    cards: evaluatePrepared(prepared, files, now),
    baseline: baseline.timing(),
    parseOnly: parseOnly.timing(),
    evaluate: evaluate.timing(),
    wholePath: wholePath.timing(),
  };
}

/**
 * The phase pass: `JSON.parse`, facts, facts + rules and `evaluateHook` timed again, in rounds of
 * their own, so that all four medians of an example come from one set of loops. It runs after every
 * target loop of the process (bench/micro-child.ts): the extra calls to the phases, made before the
 * target loops, lowered the 70 KB request's evaluateHook figure (1.56–1.75 × parse without them,
 * 1.24–1.42 × with them, in four runs), and the target must be measured as it was defined.
 */
export function runPhases(prepared: PreparedCase, files: LoadedFiles, now: Date, settings: MicroSettings): PhaseTimings {
  const { example } = prepared;
  const cards = evaluatePrepared(prepared, files, now);
  // evaluateHook builds one card per finding: the same count says the phase loops run its calls.
  if (runRulesPrepared(prepared, files, now) !== cards) {
    throw new Error(`${example.name}: facts + rules found other than evaluateHook's ${cards} cards`);
  }
  const loops = [
    () => jsonParseOnly(example.body),
    () => readFactsPrepared(prepared, files, now),
    () => runRulesPrepared(prepared, files, now),
    () => evaluatePrepared(prepared, files, now),
  ];
  let sink = 0;
  for (let i = 0; i < settings.warmupIterations; i += 1) {
    for (const loop of loops) {
      sink += loop();
    }
  }
  const samples = loops.map(() => new Samples());
  const perRound = Math.max(1, Math.ceil(settings.iterations / settings.rounds));
  for (let round = 0; round < settings.rounds; round += 1) {
    loops.forEach((loop, index) => {
      const kept = samples[index] as Samples;
      for (let i = 0; i < perRound && kept.elapsedMs < settings.maxMsPerLoop; i += 1) {
        const start = performance.now();
        sink += loop();
        kept.add(performance.now() - start);
      }
    });
  }
  if (sink <= 0) {
    throw new Error('the phase loops produced nothing');
  }
  const [parseOnly, facts, factsAndRules, evaluate] = samples.map((s) => s.timing()) as [Timing, Timing, Timing, Timing];
  return { parseOnly, facts, factsAndRules, evaluate };
}
