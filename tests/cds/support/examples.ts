import { readdirSync, readFileSync } from 'node:fs';
import { evaluateHook, type HookEvaluation } from '../../../src/cds/evaluate-hook.js';
import { parseHookRequest } from '../../../src/cds/parse-hook-request.js';
import { CDS_SERVICES } from '../../../src/cds/services.js';
import { requestMoment } from '../../../src/cli/retime-request.js';
import { createGatherer } from '../../../src/http/gather-data.js';
import { bundledPolicy } from './card-inputs.js';
import { loadRepositoryCards } from './load-cards.js';

/**
 * The invented Larkspur Bay requests in `examples/`, evaluated offline as `oxygen-order-checker evaluate` does:
 * the prefetch only (no FHIR server is called), at the moment the request describes.
 */

export type RequestBody = Record<string, unknown>;

export interface ExampleRequest {
  readonly file: string;
  readonly body: RequestBody;
}

const EXAMPLES_DIR = new URL('../../../examples/', import.meta.url);

export function loadExampleRequests(): ExampleRequest[] {
  return readdirSync(EXAMPLES_DIR)
    .filter((file) => file.endsWith('.json'))
    .sort()
    .map((file) => ({ file, body: JSON.parse(readFileSync(new URL(file, EXAMPLES_DIR), 'utf8')) as RequestBody }));
}

const policy = bundledPolicy();
const templates = loadRepositoryCards();
const refuseFetch: typeof fetch = () => Promise.reject(new Error('examples are evaluated offline'));
const gather = createGatherer({ fetch: refuseFetch, limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 } });

/** Evaluates a request body as the CLI would; throws when it is not a valid, answerable request. */
export async function evaluateExample(
  body: RequestBody,
  options: { readonly workings?: boolean; readonly now?: Date } = {},
): Promise<HookEvaluation> {
  const serviceId = CDS_SERVICES.find((service) => service.hook === body['hook'])?.id ?? 'oxygen-order-sign';
  const request = parseHookRequest(serviceId, body);
  if (request.kind !== 'ok') {
    throw new Error(`not a valid request: ${JSON.stringify(request)}`);
  }
  const now = options.now ?? requestMoment(body);
  if (now === undefined) {
    throw new Error('the request has no authoredOn to run the clock from');
  }
  const { fhirServer: _server, fhirAuthorization: _token, ...offline } = request.request;
  const gathered = await gather(offline, request.service.prefetch);
  if (gathered.kind !== 'gathered') {
    throw new Error('required prefetch missing');
  }
  return evaluateHook({ serviceId, request: request.request, data: gathered.data }, { policy, templates, now, workings: options.workings ?? false });
}

/** A deep copy, so a test can change a request without touching the shared example. */
export function copyOf<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}

/** The draft order resources of a request body (on patient-view, the orders on record). */
export function draftResources(body: RequestBody): Record<string, unknown>[] {
  if (body['hook'] === 'patient-view') {
    // No drafts on patient-view: the orders on record play their part.
    const prefetch = body['prefetch'] as Record<string, { entry?: { resource: Record<string, unknown> }[] } | undefined>;
    return ['medicationRequests', 'serviceRequests', 'deviceRequests'].flatMap((key) =>
      (prefetch[key]?.entry ?? []).map((entry) => entry.resource),
    );
  }
  const context = body['context'] as { draftOrders: { entry: { resource: Record<string, unknown> }[] } };
  return context.draftOrders.entry.map((entry) => entry.resource);
}
