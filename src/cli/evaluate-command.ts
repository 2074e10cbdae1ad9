import { z } from 'zod';
import { parseHookRequest } from '../cds/parse-hook-request.js';
import { evaluateHook, type HookEvaluation } from '../cds/evaluate-hook.js';
import { CDS_SERVICES } from '../cds/services.js';
import { ENV_DEFAULTS } from '../config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../config/load-files.js';
import { AppError, errorResult } from '../http/errors.js';
import { createGatherer } from '../http/gather-data.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { checkOptions, parseOptions } from './parse-options.js';
import { readRequestFile } from './read-request-file.js';
import { requestMoment } from './retime-request.js';

export const EVALUATE_USAGE = `Usage: oxygen-order-checker evaluate REQUEST.json [--policy FILE] [--cards DIR] [--service ID] [--now TIME] [--workings]

Prints the CDS Hooks response the service would give for a saved hook request (JSON on stdout).
  --policy   policy file (default: the bundled BTS 2017 policy)
  --cards    card template folder (default: the bundled cards/)
  --service  service id (default: chosen by the request's hook: ${CDS_SERVICES.map((s) => s.id).join(', ')})
  --now      evaluate as at this ISO 8601 time. Default: the moment the request describes (its draft
             orders' authoredOn), so a saved request gives the same answer on any day; the live
             service always uses the current time.
  --workings print each card as Markdown followed by its full workings (every input with its time
             and FHIR reference, each calculation, what was set aside, the full sources and
             cautions) instead of the JSON response.
Works offline: it reads the request's prefetch and never calls its fhirServer.
Exit 0 when it answered (whatever it found), 1 when the request could not be read or evaluated,
2 for a usage or configuration error.`;

const EvaluateOptionsSchema = z.strictObject({
  policy: z.string().optional(),
  cards: z.string().optional(),
  service: z.string().optional(),
  now: z
    .string()
    .refine((text) => /^\d{4}-\d{2}-\d{2}T/.test(text) && Number.isFinite(Date.parse(text)), 'must be an ISO 8601 date-time')
    .optional(),
  workings: z.boolean().optional(),
});

/** Each card as Markdown (indicator, summary, detail) followed by its full workings. */
function workingsText(evaluation: HookEvaluation): string {
  const blocks = evaluation.response.cards.map((card, index) => {
    const workings = evaluation.workings?.[index]?.markdown ?? '(no workings)';
    return [`## ${index + 1}. [${card.indicator}] ${card.summary}`, card.detail ?? '', '### Full workings', workings].join('\n\n');
  });
  return `${blocks.length === 0 ? 'No cards.' : blocks.join('\n\n---\n\n')}\n`;
}

/** Offline: no FHIR server is ever called, so the fetch the gatherer holds must never run. */
const refuseFetch: typeof fetch = () => Promise.reject(new Error('oxygen-order-checker evaluate does not call FHIR servers'));

export async function runEvaluateCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, {
    policy: { type: 'string' },
    cards: { type: 'string' },
    service: { type: 'string' },
    now: { type: 'string' },
    workings: { type: 'boolean' },
  });
  if (parsed.values['help'] === true) {
    io.stdout(`${EVALUATE_USAGE}\n`);
    return 0;
  }
  const [file, ...extra] = parsed.positionals;
  if (file === undefined || extra.length > 0) {
    throw new UsageError('give exactly one REQUEST.json');
  }
  const options = checkOptions(EvaluateOptionsSchema, {
    policy: parsed.values['policy'],
    cards: parsed.values['cards'],
    service: parsed.values['service'],
    now: parsed.values['now'],
    workings: parsed.values['workings'],
  });

  const loaded = await loadPolicyAndCards({
    policyPath: options.policy ?? ENV_DEFAULTS.OXYGEN_CHECKER_POLICY,
    cardsDir: options.cards ?? ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR,
  });
  if (loaded.kind === 'invalid') {
    throw new UsageError(`cannot start:\n${formatLoadProblems(loaded.problems)}`);
  }

  const read = readRequestFile(file, io);
  if (read.kind === 'unreadable') {
    io.stderr(`oxygen-order-checker evaluate: ${read.message}\n`);
    return 1;
  }
  const body = read.body;
  const hook = typeof body === 'object' && body !== null ? (body as { hook?: unknown }).hook : undefined;
  const serviceId = options.service ?? CDS_SERVICES.find((s) => s.hook === hook)?.id;
  if (serviceId === undefined) {
    io.stderr(`oxygen-order-checker evaluate: the request's hook is not one this service answers (${CDS_SERVICES.map((s) => s.hook).join(', ')})\n`);
    return 1;
  }
  const request = parseHookRequest(serviceId, body);
  if (request.kind !== 'ok') {
    const detail =
      request.kind === 'invalid'
        ? request.issues.map((issue) => `  ${issue.path}: ${issue.message}`).join('\n')
        : request.kind === 'unknown-service'
          ? `  no service '${serviceId}'`
          : `  service '${serviceId}' answers ${request.supportedHooks.join(', ')}`;
    io.stderr(`oxygen-order-checker evaluate: the request is not valid:\n${detail}\n`);
    return 1;
  }

  const now = options.now === undefined ? (requestMoment(body) ?? io.now()) : new Date(options.now);
  const gather = createGatherer({
    fetch: refuseFetch,
    limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 },
  });
  const { fhirServer: _server, fhirAuthorization: _token, ...offline } = request.request;
  const gathered = await gather(offline, request.service.prefetch);
  if (gathered.kind === 'unavailable') {
    // What the service would answer: 412 with an OperationOutcome naming the missing data.
    const result = errorResult(new AppError('CDS_ERR_PREFETCH_UNAVAILABLE', { unavailable: gathered.unavailable }), 'cli');
    io.stdout(`${JSON.stringify(result.body, null, 2)}\n`);
    io.stderr('oxygen-order-checker evaluate: required data is missing from the prefetch (the service would answer 412)\n');
    return 1;
  }
  const evaluation = evaluateHook(
    { serviceId, request: request.request, data: gathered.data },
    {
      policy: loaded.policy,
      policyContentHash: loaded.policyContentHash,
      templates: loaded.templates,
      now,
      workings: options.workings === true,
    },
  );
  io.stdout(options.workings === true ? workingsText(evaluation) : `${JSON.stringify(evaluation.response, null, 2)}\n`);
  io.stderr(`oxygen-order-checker evaluate: ${evaluation.response.cards.length} card(s), evaluated as at ${now.toISOString()} with policy ${evaluation.policyId} v${evaluation.policyVersion}\n`);
  return 0;
}
