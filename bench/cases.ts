import { readdirSync, readFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { requestMoment, retimeRequest } from '../src/cli/retime-request.js';

/**
 * The example hook calls the bench sends, each moved to `now` with the CLI's retime logic (as
 * `oxygen-order-checker retime` does), so no observation is stale and the service judges them as a live call.
 */
export interface HookExample {
  /** The file name without `.json`, e.g. `order-sign-copd-acidosis-venturi`. */
  readonly name: string;
  readonly serviceId: 'oxygen-order-sign' | 'oxygen-order-select';
  /** The retimed request as sent, compact JSON. */
  readonly body: string;
  readonly requestBytes: number;
}

/**
 * Order-sign examples that cover different work: a hypercapnic patient on a Venturi mask with a blood
 * gas, an SpO2 above the ordered target, and an order with no target at all. The largest order-sign
 * example is always added (found by size, so it stays right as examples change), and every
 * order-select example is run.
 */
export const SIGN_EXAMPLES = [
  'order-sign-copd-acidosis-venturi',
  'order-sign-pneumonia-above-target',
  'order-sign-face-mask-no-target',
] as const;

const SERVICE_BY_HOOK = { 'order-sign': 'oxygen-order-sign', 'order-select': 'oxygen-order-select' } as const;

function readExample(folder: string, file: string, now: Date): HookExample {
  const raw: unknown = JSON.parse(readFileSync(join(folder, file), 'utf8'));
  const hook = (raw as { hook?: unknown }).hook;
  if (hook !== 'order-sign' && hook !== 'order-select') {
    throw new Error(`${file}: hook ${String(hook)} is not one the service answers`);
  }
  const from = requestMoment(raw);
  if (from === undefined) {
    throw new Error(`${file}: no draft order with an authoredOn date-time to retime from`);
  }
  const body = JSON.stringify(retimeRequest(raw, from, now));
  return { name: basename(file, '.json'), serviceId: SERVICE_BY_HOOK[hook], body, requestBytes: Buffer.byteLength(body) };
}

export interface ExampleSelection {
  readonly sign: readonly HookExample[];
  readonly select: readonly HookExample[];
  /** The order-sign example with the largest request, among `sign`. */
  readonly largestSign: HookExample;
}

export function selectExamples(root: string, now: Date, all: boolean): ExampleSelection {
  const folder = join(root, 'examples');
  // The bench times the order hooks; patient-view examples are left to the tests.
  const isPatientView = (file: string): boolean =>
    (JSON.parse(readFileSync(join(folder, file), 'utf8')) as { hook?: unknown }).hook === 'patient-view';
  const files = readdirSync(folder)
    .filter((file) => file.endsWith('.json') && !isPatientView(file))
    .sort();
  const examples = files.map((file) => readExample(folder, file, now));
  const signAll = examples.filter((example) => example.serviceId === 'oxygen-order-sign');
  const largestSign = signAll.reduce<HookExample | undefined>(
    (largest, example) => (largest === undefined || example.requestBytes > largest.requestBytes ? example : largest),
    undefined,
  );
  if (largestSign === undefined) {
    throw new Error('examples/ holds no order-sign request');
  }
  for (const name of SIGN_EXAMPLES) {
    if (!signAll.some((example) => example.name === name)) {
      throw new Error(`examples/${name}.json is missing (named in bench/cases.ts SIGN_EXAMPLES)`);
    }
  }
  const chosen = new Set<string>([...SIGN_EXAMPLES, largestSign.name]);
  const sign = all ? signAll : signAll.filter((example) => chosen.has(example.name));
  const select = examples.filter((example) => example.serviceId === 'oxygen-order-select');
  if (select.length === 0) {
    throw new Error('examples/ holds no order-select request');
  }
  return { sign, select, largestSign };
}

/** What one call answered before and after its load: the bench fails if the two differ. */
export interface CallCheck {
  readonly status: number;
  readonly responseBytes: number;
  /** Cards for a hook call, services for discovery. */
  readonly items: number;
  readonly body: string;
}

export async function checkCall(
  url: string,
  init: { readonly method: 'GET' | 'POST'; readonly body?: string },
  expectList: 'cards' | 'services' | 'any',
): Promise<CallCheck> {
  const response = await fetch(url, {
    method: init.method,
    headers: init.body === undefined ? {} : { 'content-type': 'application/json' },
    ...(init.body === undefined ? {} : { body: init.body }),
    signal: AbortSignal.timeout(10_000),
  });
  const body = await response.text();
  if (response.status !== 200) {
    throw new Error(`${init.method} ${url} answered ${response.status}: ${body.slice(0, 600)}`);
  }
  const parsed = JSON.parse(body) as Record<string, unknown>;
  const list = expectList === 'any' ? [] : parsed[expectList];
  if (!Array.isArray(list)) {
    throw new Error(`${init.method} ${url} answered 200 without a ${expectList} list`);
  }
  return { status: response.status, responseBytes: Buffer.byteLength(body), items: list.length, body };
}
