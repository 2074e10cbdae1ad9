import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { CardTemplates } from '../cds/card-templates.js';
import { evaluateHook } from '../cds/evaluate-hook.js';
import { parseHookRequest } from '../cds/parse-hook-request.js';
import { PACKAGE_ROOT } from '../config/package-root.js';
import type { Policy } from '../core/policy.js';
import { auditRecordsFor, type PatientKeyOf } from '../http/audit-trail.js';
import { DEMO_CLIENT } from '../http/auth.js';
import { createGatherer } from '../http/gather-data.js';
import type { AdvisoryRecord, ClientIdentity, FeedbackLimits, Store } from '../store/store.js';
import { buildDemoFeedback } from './demo-feedback.js';
import { buildDemoCalls, DEMO_EXAMPLE_FILES, type DemoCall } from './demo-requests.js';

/**
 * Fills an empty store with the demo shift, so `npm start` on a fresh clone opens review pages with
 * something to read. Every advisory is a real output of the service: each demo call is validated,
 * gathered from its prefetch and evaluated exactly as the hook route does (parseHookRequest, the
 * gatherer, evaluateHook, then the audit trail's record builder), at the moment the call is taken to
 * have been made. Only the demo mode calls this (src/server.ts), and it writes nothing to a store
 * that already holds an advisory.
 */

export interface DemoSeedDeps {
  readonly policy: Policy;
  readonly templates: CardTemplates;
  readonly policyContentHash: string;
  readonly patientKey: PatientKeyOf;
  readonly feedbackLimits: FeedbackLimits;
  /** Reads one saved example by file name; defaults to the package's examples/ folder. */
  readonly readExample?: (fileName: string) => unknown;
}

export type DemoSeedResult =
  | { readonly kind: 'seeded'; readonly calls: number; readonly advisories: number; readonly feedback: number; readonly units: number; readonly rules: number }
  | { readonly kind: 'store-not-empty' };

/** The demo's one client, as the audit trail and feedback records name it. */
export const DEMO_CLIENT_IDENTITY: ClientIdentity = { iss: DEMO_CLIENT.iss };

/** The demo never calls a FHIR server: every call carries its data in the prefetch. */
const refuseFetch: typeof fetch = () => Promise.reject(new Error('the demo seed does not call FHIR servers'));

const gather = createGatherer({
  fetch: refuseFetch,
  limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 },
});

function readBundledExample(fileName: string): unknown {
  return JSON.parse(readFileSync(join(PACKAGE_ROOT, 'examples', fileName), 'utf8')) as unknown;
}

/** The audit records of one demo call, built by the same steps as a live hook call's. */
export async function evaluateDemoCall(
  call: DemoCall,
  deps: Pick<DemoSeedDeps, 'policy' | 'templates' | 'policyContentHash' | 'patientKey'>,
): Promise<AdvisoryRecord[]> {
  const parsed = parseHookRequest(call.serviceId, call.request);
  if (parsed.kind !== 'ok') {
    throw new Error(`demo: a demo request for ${call.serviceId} does not validate (${parsed.kind})`);
  }
  const { service, request } = parsed;
  const { fhirServer: _server, fhirAuthorization: _token, ...offline } = request;
  const gathered = await gather(offline, service.prefetch);
  if (gathered.kind === 'unavailable') {
    throw new Error(`demo: a demo request for ${call.serviceId} lacks required prefetch`);
  }
  const evaluation = evaluateHook(
    { serviceId: service.id, request, data: gathered.data },
    { policy: deps.policy, policyContentHash: deps.policyContentHash, templates: deps.templates, now: call.issuedAt },
  );
  const patientId = request.context['patientId'];
  return auditRecordsFor(
    evaluation,
    {
      serviceId: service.id,
      hook: service.hook,
      hookInstance: request.hookInstance,
      client: DEMO_CLIENT_IDENTITY,
      issuedAt: call.issuedAt,
      fhirServer: request.fhirServer,
      patientId: typeof patientId === 'string' ? patientId : '',
    },
    deps,
  );
}

/** The demo shift's calls, read from the examples and placed in the hours before `now`. */
export function demoCalls(now: Date, readExample: (fileName: string) => unknown = readBundledExample): DemoCall[] {
  return buildDemoCalls(new Map(DEMO_EXAMPLE_FILES.map((name) => [name, readExample(name)])), now);
}

function hookInstanceOf(call: DemoCall): string {
  return (call.request as { hookInstance: string }).hookInstance;
}

export async function seedDemoStore(store: Store, now: Date, deps: DemoSeedDeps): Promise<DemoSeedResult> {
  if (!(await store.isEmpty())) {
    return { kind: 'store-not-empty' };
  }
  const calls = demoCalls(now, deps.readExample);
  const records: AdvisoryRecord[] = [];
  for (const call of calls) {
    const callRecords = await evaluateDemoCall(call, deps);
    await store.recordAdvisories(callRecords);
    records.push(...callRecords);
  }
  const planned = new Map(
    calls.flatMap((call) => (call.answers === undefined ? [] : [[hookInstanceOf(call), call.answers] as const])),
  );
  const feedback = buildDemoFeedback(records, deps.templates, now, planned);
  let recorded = 0;
  for (const { item, receivedAt } of feedback) {
    const write = await store.recordFeedback(DEMO_CLIENT_IDENTITY, [item], receivedAt, deps.feedbackLimits);
    if (write.kind === 'recorded') {
      recorded += write.records.length;
    }
  }
  return {
    kind: 'seeded',
    calls: calls.length,
    advisories: records.length,
    feedback: recorded,
    units: new Set(records.map((record) => record.unit)).size,
    rules: new Set(records.map((record) => record.ruleId)).size,
  };
}
