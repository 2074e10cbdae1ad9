import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { checkCall, type CallCheck, type ExampleSelection, type HookExample } from './cases.js';
import type { ChildServer } from './child-server.js';
import { loadProblems, runLoad, type LoadResult, type LoadSpec } from './load-test.js';
import type { BenchOptions } from './options.js';
import { summariseBaseline, type BaselineSummary, type LoadRow } from './report.js';
import { startJsonEcho, startService, type BuiltService } from './service-process.js';

/**
 * The HTTP cases, in one run against one service process: the baseline first, the JSON echo,
 * discovery, each hook call, and the baseline again last, so drift over the run shows.
 */
export interface HttpMeasurements {
  readonly rows: readonly LoadRow[];
  readonly baseline: BaselineSummary;
  readonly echo: LoadResult;
  readonly logLinesDuringLoad: number;
  /** Anything that makes the run unusable; empty when all is well. */
  readonly problems: readonly string[];
}

export interface HttpContext {
  readonly root: string;
  readonly built: BuiltService;
  readonly examples: ExampleSelection;
  readonly options: BenchOptions;
  readonly scratch: string;
  readonly progress: (line: string) => void;
}

function hookUrl(service: ChildServer, example: HookExample): string {
  return `${service.url}/cds-services/${example.serviceId}`;
}

export async function measureHttp(ctx: HttpContext): Promise<HttpMeasurements> {
  const { examples, options, progress } = ctx;
  const hookExamples = [...examples.sign, ...examples.select];
  progress('starting the service');
  const service = await startService(ctx.root, ctx.built);
  let echo: ChildServer | undefined;
  try {
    const health = await checkCall(`${service.url}/healthz`, { method: 'GET' }, 'any');
    const discovery = await checkCall(`${service.url}/cds-services`, { method: 'GET' }, 'services');
    const before = new Map<string, CallCheck>();
    for (const example of hookExamples) {
      before.set(example.name, await checkCall(hookUrl(service, example), { method: 'POST', body: example.body }, 'cards'));
    }
    const largest = before.get(examples.largestSign.name);
    if (largest === undefined) {
      throw new Error('the largest order-sign example was not checked');
    }
    const replyFile = join(ctx.scratch, 'echo-reply.json');
    writeFileSync(replyFile, largest.body);
    echo = await startJsonEcho(ctx.root, replyFile, ctx.built);
    const echoUrl = `${echo.url}/echo`;
    const echoCheck = await checkCall(echoUrl, { method: 'POST', body: examples.largestSign.body }, 'cards');

    const spec = (label: string, url: string, method: 'GET' | 'POST', body?: string): LoadSpec => ({
      label,
      url,
      method,
      ...(body === undefined ? {} : { body }),
      connections: options.connections,
      durationS: options.durationS,
      warmupS: options.warmupS,
    });
    const rows: LoadRow[] = [];
    const measure = async (
      kind: LoadRow['kind'],
      load: LoadSpec,
      check: CallCheck,
      items: number | undefined,
    ): Promise<LoadResult> => {
      const linesAtStart = service.linesAfterStart();
      const result = await runLoad(load);
      const logLines = service.linesAfterStart() - linesAtStart;
      rows.push({ result, kind, responseBytes: check.responseBytes, items, logLines });
      progress(`${load.label}: ${Math.round(result.reqPerSec)} req/s, p99 ${result.latencyMs.p99} ms`);
      if (logLines > 0) {
        progress(`  the service logged ${logLines} lines; the last: ${(service.lastLine() ?? '').slice(0, 600)}`);
      }
      return result;
    };

    // Both processes (and autocannon in this one) start cold: without this the first case, the
    // baseline, is measured while the JIT is still at work and comes out low.
    progress('priming both processes');
    for (const [url, body] of [
      [`${service.url}/healthz`, undefined],
      [hookUrl(service, examples.largestSign), examples.largestSign.body],
      [echoUrl, examples.largestSign.body],
    ] as const) {
      await runLoad({ ...spec('prime', url, body === undefined ? 'GET' : 'POST', body), durationS: options.primeS, warmupS: 0 });
    }

    const linesBefore = service.linesAfterStart();
    const first = await measure('baseline', spec('baseline: GET /healthz (first)', `${service.url}/healthz`, 'GET'), health, undefined);
    const echoResult = await measure(
      'reference',
      spec(`JSON echo (bare express) of ${examples.largestSign.name}`, echoUrl, 'POST', examples.largestSign.body),
      echoCheck,
      echoCheck.items,
    );
    await measure('service', spec('GET /cds-services', `${service.url}/cds-services`, 'GET'), discovery, discovery.items);
    for (const example of hookExamples) {
      const check = before.get(example.name);
      if (check !== undefined) {
        await measure('service', spec(example.name, hookUrl(service, example), 'POST', example.body), check, check.items);
      }
    }
    const last = await measure('baseline', spec('baseline: GET /healthz (last)', `${service.url}/healthz`, 'GET'), health, undefined);
    const logLinesDuringLoad = service.linesAfterStart() - linesBefore;

    const problems = rows.flatMap((row) => loadProblems(row.result));
    for (const example of hookExamples) {
      const after = await checkCall(hookUrl(service, example), { method: 'POST', body: example.body }, 'cards');
      const earlier = before.get(example.name);
      if (earlier !== undefined && after.items !== earlier.items) {
        problems.push(`${example.name}: ${earlier.items} cards before the load, ${after.items} after`);
      }
    }
    return { rows, baseline: summariseBaseline(first, last), echo: echoResult, logLinesDuringLoad, problems };
  } finally {
    await echo?.stop();
    await service.stop();
    progress('stopped the service');
  }
}
