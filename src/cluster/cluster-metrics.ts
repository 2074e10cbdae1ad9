import { AggregatorRegistry, Counter, Gauge, Registry } from 'prom-client';
import type { MetricsAnswer, MetricsCollect, WorkerMetrics } from './messages.js';

/**
 * The primary's part in `/metrics` (messages.ts says who sends what). A Prometheus scrape reaches
 * whichever worker the cluster hands the connection to, so a worker's own counters would be a
 * different sample of the host on every scrape. Instead the worker asks the primary, which collects
 * every listening worker's metrics and sums them with prom-client's AggregatorRegistry (counters and
 * histogram buckets summed; gauges summed unless the metric names another aggregator), adds its own
 * two (workers listening, workers replaced) and answers with one host-wide text. Labels are the
 * workers' own (route, status, rule id...): no worker id or process id becomes a label, so the series
 * do not multiply with restarts.
 *
 * A scrape is answered only when every listening worker sent its part: a sum over some of them would
 * look to Prometheus like counters going back (a counter reset), and `rate()` would then jump.
 */

const PREFIX = 'oxygen_checker_';

/** How long the primary waits for every worker's part of one scrape. */
export const COLLECT_TIMEOUT_MS = 2_000;

export interface PrimaryMetrics {
  readonly registry: Registry;
  readonly workersListening: (count: number) => void;
  readonly workerReplaced: () => void;
}

export function createPrimaryMetrics(): PrimaryMetrics {
  const registry = new Registry();
  const listening = new Gauge({
    name: `${PREFIX}workers`,
    help: 'Worker processes listening (a cluster of OXYGEN_CHECKER_WORKERS processes; its primary counts them).',
    registers: [registry],
  });
  const replaced = new Counter({
    name: `${PREFIX}worker_restarts_total`,
    help: 'Worker processes that stopped unexpectedly and were replaced by the primary.',
    registers: [registry],
  });
  replaced.inc(0);
  return {
    registry,
    workersListening: (count) => listening.set(count),
    workerReplaced: () => replaced.inc(),
  };
}

/** One worker as the collector sees it: send it a message; `undefined` when it cannot be reached. */
export interface CollectTarget {
  readonly id: number;
  readonly send: (message: MetricsCollect | MetricsAnswer) => boolean;
}

/**
 * Answers workers' asks: `answer(from, ask)` collects from `targets()` and sends `from` the summed
 * text or why there is none; `part(from, message)` takes a worker's part. Timers are the only clock.
 */
export function createMetricsCollector(deps: {
  readonly primary: PrimaryMetrics;
  readonly targets: () => readonly CollectTarget[];
  readonly timeoutMs?: number;
}): {
  readonly answer: (from: CollectTarget, ask: number) => void;
  readonly part: (fromId: number, collect: number, metrics: WorkerMetrics | undefined) => void;
} {
  interface Collection {
    readonly expected: Set<number>;
    readonly parts: WorkerMetrics[];
    readonly finish: (failed?: string) => void;
  }
  const collections = new Map<number, Collection>();
  let nextCollect = 1;

  const answer = (from: CollectTarget, ask: number): void => {
    const collect = nextCollect;
    nextCollect += 1;
    const targets = deps.targets();
    const expected = new Set(targets.map((target) => target.id));
    const parts: WorkerMetrics[] = [];
    let done = false;
    // Set below, once `finish` exists; `finish` clears it.
    const timing: { timer?: NodeJS.Timeout } = {};
    const finish = (failed?: string): void => {
      if (done) {
        return;
      }
      done = true;
      clearTimeout(timing.timer);
      collections.delete(collect);
      if (failed !== undefined) {
        from.send({ kind: 'oxygen-checker/metrics-answer', ask, failed });
        return;
      }
      deps.primary.registry
        .getMetricsAsJSON()
        .then((own) => AggregatorRegistry.aggregate([...parts, own]).metrics())
        .then(
          (text) => from.send({ kind: 'oxygen-checker/metrics-answer', ask, text }),
          () => from.send({ kind: 'oxygen-checker/metrics-answer', ask, failed: 'the metrics could not be summed' }),
        );
    };
    timing.timer = setTimeout(() => {
      finish(`${String(expected.size)} of ${String(targets.length)} workers did not send their metrics in time`);
    }, deps.timeoutMs ?? COLLECT_TIMEOUT_MS);
    collections.set(collect, { expected, parts, finish });
    for (const target of targets) {
      if (!target.send({ kind: 'oxygen-checker/metrics-collect', collect })) {
        finish('a worker could not be reached');
        return;
      }
    }
    if (targets.length === 0) {
      finish();
    }
  };

  const part = (fromId: number, collect: number, metrics: WorkerMetrics | undefined): void => {
    const collection = collections.get(collect);
    if (collection === undefined || !collection.expected.has(fromId)) {
      return;
    }
    if (metrics === undefined) {
      collection.finish('a worker could not read its metrics');
      return;
    }
    collection.expected.delete(fromId);
    collection.parts.push(metrics);
    if (collection.expected.size === 0) {
      collection.finish();
    }
  };

  return { answer, part };
}
