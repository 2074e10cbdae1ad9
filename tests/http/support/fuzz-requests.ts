import { readdirSync, readFileSync } from 'node:fs';
import fc from 'fast-check';
import { CDS_SERVICES } from '../../../src/cds/services.js';
import { requestMoment } from '../../../src/cli/retime-request.js';
import type { Answer } from './app-server.js';
import { addedR4Problems, protocolProblems } from './conformance.js';

/**
 * Request mutation for the fuzz suites: start from the realistic Larkspur Bay examples in
 * `examples/*.json` and change them the ways a broken or hostile client would (drop keys, change
 * types, insert garbage, duplicate entries, shuffle lists, extreme numbers, prototype keys), then
 * check every answer against what the service promises (docs/errors.md, CDS Hooks 2.0 §5.3).
 */

export type Json = unknown;
type Segment = string | number;

export interface Example {
  readonly file: string;
  readonly serviceId: string;
  readonly body: Readonly<Record<string, Json>>;
  /** Five minutes after the example's latest draft order: the clock its call runs at. */
  readonly now: Date;
  /** The example's patient id, names and record number: none may reach a log line. */
  readonly secrets: readonly string[];
}

const EXAMPLES_DIR = new URL('../../../examples/', import.meta.url);

function secretsOf(body: Record<string, Json>): string[] {
  const context = body['context'] as { patientId?: unknown } | undefined;
  const patient = (body['prefetch'] as { patient?: Record<string, unknown> } | undefined)?.patient ?? {};
  const names = (patient['name'] as { family?: unknown; given?: unknown[] }[] | undefined) ?? [];
  const identifiers = (patient['identifier'] as { value?: unknown }[] | undefined) ?? [];
  return [
    context?.patientId,
    patient['birthDate'],
    ...names.flatMap((name) => [name.family, ...(name.given ?? [])]),
    ...identifiers.map((identifier) => identifier.value),
  ].filter((value): value is string => typeof value === 'string' && value.length >= 4);
}

export function loadExamples(): Example[] {
  return readdirSync(EXAMPLES_DIR)
    .filter((file) => file.endsWith('.json'))
    .sort()
    .map((file) => {
      const body = JSON.parse(readFileSync(new URL(file, EXAMPLES_DIR), 'utf8')) as Record<string, Json>;
      const moment = requestMoment(body);
      if (moment === undefined) throw new Error(`${file}: no authoredOn to run the clock from`);
      return {
        file,
        serviceId: CDS_SERVICES.find((service) => service.hook === body['hook'])?.id ?? 'oxygen-order-sign',
        body,
        now: new Date(moment.getTime() + 5 * 60_000),
        secrets: secretsOf(body),
      };
    });
}

/** Stands in for a number JSON cannot hold; the sent text carries `1e309` (JSON.parse reads Infinity). */
const HUGE_LITERAL = 'oxygen-order-checker-fuzz-1e309';

const GARBAGE_CONSTANTS: readonly Json[] = [
  null, '', [], {}, 0, -0, -1, 1e308, -1e308, 5e-324, 2 ** 53 + 1, true, false,
  'NaN', 'Infinity', '-Infinity', '-0', '95', '0.94', '1e309', HUGE_LITERAL,
  '__proto__', 'constructor', 'toString', 'hasOwnProperty',
  '2025-02-30T25:61:00Z', '9999-12-31T23:59:59Z', '0000-01-01', 'yesterday', '1951-13-45',
  '\ud800', '\u0000', '\u202e', '<script>alert(1)</script>', '**bold** [x](javascript:alert(1))',
  '{{patientLabel}}', '{{missingList}} {{advisedRange}}', '| a | b |\n|---|---|',
  'x'.repeat(3000), 'y'.repeat(5000),
  'Patient/lbgh-demo-9999', 'ServiceRequest/nowhere', 'http://loinc.org', 'http://snomed.info/sct',
  '59408-5', '2019-8', '13645005', '%', 'mm[Hg]', 'kPa', 'L/min', '/min', 'mmHg', '[pH]',
];

/** A value a careless or hostile client might put anywhere. */
export const garbage: fc.Arbitrary<Json> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom(...GARBAGE_CONSTANTS) },
  { weight: 2, arbitrary: fc.jsonValue({ maxDepth: 2 }) },
  { weight: 1, arbitrary: fc.string({ unit: 'grapheme', maxLength: 24 }) },
  { weight: 1, arbitrary: fc.double() },
  { weight: 1, arbitrary: fc.integer() },
);

const EXTREME_NUMBERS: readonly Json[] = [
  0, -0, -1, 1e308, -1e308, 5e-324, -5e-324, 2 ** 53 + 1, 1e-9, 0.1 + 0.2, 100.0000001, 999999, HUGE_LITERAL,
];

export type Mutation =
  | { readonly op: 'drop'; readonly at: number }
  | { readonly op: 'replace'; readonly at: number; readonly value: Json }
  | { readonly op: 'retype'; readonly at: number }
  | { readonly op: 'extreme'; readonly at: number; readonly value: Json }
  | { readonly op: 'duplicate'; readonly at: number; readonly times: number }
  | { readonly op: 'shuffle'; readonly at: number; readonly by: number }
  | { readonly op: 'hostile-key'; readonly at: number; readonly key: string; readonly value: Json };

const at = fc.nat();
export const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ op: fc.constant('drop' as const), at }),
  fc.record({ op: fc.constant('replace' as const), at, value: garbage }),
  fc.record({ op: fc.constant('retype' as const), at }),
  fc.record({ op: fc.constant('extreme' as const), at, value: fc.constantFrom(...EXTREME_NUMBERS) }),
  fc.record({ op: fc.constant('duplicate' as const), at, times: fc.integer({ min: 1, max: 3 }) }),
  fc.record({ op: fc.constant('shuffle' as const), at, by: fc.integer({ min: 1, max: 7 }) }),
  fc.record({
    op: fc.constant('hostile-key' as const),
    at,
    key: fc.constantFrom('__proto__', 'constructor', 'prototype', 'toString', ''),
    value: garbage,
  }),
);

interface Site {
  readonly path: readonly Segment[];
  readonly value: Json;
}

/** Every value under the root, with its path; iterative, so depth is no concern. */
function sitesOf(root: Json): Site[] {
  const found: Site[] = [];
  const stack: Site[] = [{ path: [], value: root }];
  for (let site = stack.pop(); site !== undefined; site = stack.pop()) {
    if (site.path.length > 0) found.push(site);
    const { value, path } = site;
    if (Array.isArray(value)) value.forEach((item: Json, i) => stack.push({ path: [...path, i], value: item }));
    else if (value !== null && typeof value === 'object') {
      for (const key of Object.keys(value)) stack.push({ path: [...path, key], value: (value as Record<string, Json>)[key] });
    }
  }
  return found;
}

/** Sets an own property even for `__proto__`, which plain assignment would treat as the prototype. */
function put(holder: Record<string, Json>, key: string, value: Json): void {
  Object.defineProperty(holder, key, { value, enumerable: true, writable: true, configurable: true });
}

function parentOf(root: Json, path: readonly Segment[]): Json {
  let holder: Json = root;
  for (const segment of path.slice(0, -1)) holder = (holder as Record<Segment, Json>)[segment];
  return holder;
}

function setAt(root: Json, path: readonly Segment[], value: Json): void {
  const holder = parentOf(root, path);
  const last = path[path.length - 1];
  if (Array.isArray(holder) && typeof last === 'number') holder[last] = value;
  else if (holder !== null && typeof holder === 'object' && last !== undefined) put(holder as Record<string, Json>, String(last), value);
}

function retyped(value: Json): Json {
  if (typeof value === 'number') return String(value);
  if (typeof value === 'string') return /^-?\d+(\.\d+)?$/.test(value) ? Number(value) : [value];
  if (typeof value === 'boolean') return value ? 'true' : 0;
  if (Array.isArray(value)) return value.length === 0 ? {} : value[0];
  if (value !== null && typeof value === 'object') return [value];
  return {};
}

function pick(sites: readonly Site[], index: number, keep: (value: Json) => boolean): Site | undefined {
  const chosen = sites.filter((site) => keep(site.value));
  return chosen.length === 0 ? undefined : chosen[index % chosen.length];
}

/** Applies the mutations in turn to a deep copy of `body`; each picks its site from what is there then. */
export function mutate(body: Json, mutations: readonly Mutation[]): Json {
  const root = structuredClone(body);
  for (const change of mutations) {
    const sites = sitesOf(root);
    const any = (): Site | undefined => pick(sites, change.at, () => true);
    switch (change.op) {
      case 'drop': {
        const site = any();
        if (site === undefined) break;
        const holder = parentOf(root, site.path);
        const last = site.path[site.path.length - 1];
        if (Array.isArray(holder) && typeof last === 'number') holder.splice(last, 1);
        else if (holder !== null && typeof holder === 'object') delete (holder as Record<string, Json>)[String(last)];
        break;
      }
      case 'replace': {
        const site = any();
        if (site !== undefined) setAt(root, site.path, structuredClone(change.value));
        break;
      }
      case 'retype': {
        const site = any();
        if (site !== undefined) setAt(root, site.path, retyped(site.value));
        break;
      }
      case 'extreme': {
        const site = pick(sites, change.at, (value) => typeof value === 'number');
        if (site !== undefined) setAt(root, site.path, change.value);
        break;
      }
      case 'duplicate': {
        const site = pick(sites, change.at, (value) => Array.isArray(value) && value.length > 0);
        if (site === undefined) break;
        const list = site.value as Json[];
        const item = list[change.at % list.length];
        for (let i = 0; i < change.times; i += 1) list.push(structuredClone(item));
        break;
      }
      case 'shuffle': {
        const site = pick(sites, change.at, (value) => Array.isArray(value) && value.length > 1);
        if (site === undefined) break;
        const list = site.value as Json[];
        const moved = list.splice(0, change.by % list.length);
        list.push(...moved.reverse());
        break;
      }
      case 'hostile-key': {
        const site = pick(sites, change.at, (value) => value !== null && typeof value === 'object' && !Array.isArray(value));
        if (site !== undefined) put(site.value as Record<string, Json>, change.key, structuredClone(change.value));
        break;
      }
    }
  }
  return root;
}

/** The text sent: JSON, with the stand-in for 1e309 written as the literal. */
export function toWire(body: Json): string {
  return JSON.stringify(body).replaceAll(`"${HUGE_LITERAL}"`, '1e309');
}

/**
 * What the service promises for any call (docs/errors.md): no 5xx; JSON; 200 bodies pass the CDS
 * Hooks 2.0 §5.3 checklist and our strict schema (and, when `checkR4`, suggestions add no R4 fault
 * to the draft they copy); a 412 is an OperationOutcome whose issues carry diagnostics; every other
 * 4xx carries a code and a message, and issues name their field.
 */
export function answerProblems(answer: Answer, sent: Json, checkR4: boolean): string[] {
  const problems: string[] = [];
  if (answer.status >= 500) return [`status ${answer.status}: ${answer.text.slice(0, 300)}`];
  if (!/^application\/(fhir\+)?json; charset=utf-8$/.test(answer.headers.get('content-type') ?? '')) {
    if (answer.status !== 204) problems.push(`content-type ${String(answer.headers.get('content-type'))}`);
  }
  const body = answer.body as Record<string, unknown> | undefined;
  if (answer.status === 200 && body !== undefined && 'cards' in body) {
    problems.push(...protocolProblems(body));
    if (checkR4) problems.push(...addedR4Problems(body, sent));
  } else if (answer.status === 412) {
    const issues = body?.['issue'];
    if (body?.['resourceType'] !== 'OperationOutcome' || !Array.isArray(issues) || issues.length === 0) {
      problems.push('412 without an OperationOutcome holding issues');
    } else if (!issues.every((issue: { diagnostics?: unknown }) => typeof issue.diagnostics === 'string' && issue.diagnostics !== '')) {
      problems.push('412 issue without diagnostics');
    }
  } else if (answer.status >= 400) {
    if (typeof body?.['code'] !== 'string' || typeof body['message'] !== 'string' || body['message'] === '') {
      problems.push(`${answer.status} without code and message`);
    }
    const issues = body?.['issues'];
    if (issues !== undefined && (!Array.isArray(issues) || !issues.every((i: { path?: unknown; message?: unknown }) => typeof i.path === 'string' && typeof i.message === 'string'))) {
      problems.push(`${answer.status} with issues that do not name a path and a message`);
    }
  }
  return problems;
}

/**
 * Fixed seed, so a CI failure replays exactly; fast-check prints the seed and path on failure.
 * `FUZZ_SEED=<n>` explores other cases locally.
 */
export const FUZZ_SEED = Number(process.env['FUZZ_SEED'] ?? '20250314');
