import type { Registry } from 'prom-client';

/**
 * The messages a cluster's primary and its workers exchange over Node's IPC channel
 * (process.send / worker.send), for `/metrics`: a scrape reaches one worker, which asks the primary;
 * the primary collects every listening worker's metrics, sums them with prom-client's
 * AggregatorRegistry and sends the text back. Every kind carries the `oxygen-checker/` prefix, so
 * the messages Node and prom-client send on the same channel are told apart. No message carries a
 * request, a token or anything about a patient: only numbers keyed by metric names and labels.
 */

/** One worker's metrics, as prom-client's `getMetricsAsJSON` gives them. */
export type WorkerMetrics = Awaited<ReturnType<Registry['getMetricsAsJSON']>>;

/** Worker to primary: a scrape arrived; please answer with the whole cluster's metrics. */
export interface MetricsAsk {
  readonly kind: 'oxygen-checker/metrics-ask';
  readonly ask: number;
}

/** Primary to worker: send your metrics for collection `collect`. */
export interface MetricsCollect {
  readonly kind: 'oxygen-checker/metrics-collect';
  readonly collect: number;
}

/** Worker to primary: this worker's metrics, as prom-client's `getMetricsAsJSON` gives them. */
export interface MetricsPart {
  readonly kind: 'oxygen-checker/metrics-part';
  readonly collect: number;
  readonly metrics?: WorkerMetrics;
}

/** Primary to worker: the answer to `ask`, the Prometheus text, or why there is none. */
export interface MetricsAnswer {
  readonly kind: 'oxygen-checker/metrics-answer';
  readonly ask: number;
  readonly text?: string;
  readonly failed?: string;
}

export type ClusterMessage = MetricsAsk | MetricsCollect | MetricsPart | MetricsAnswer;

const KINDS: ReadonlySet<string> = new Set([
  'oxygen-checker/metrics-ask',
  'oxygen-checker/metrics-collect',
  'oxygen-checker/metrics-part',
  'oxygen-checker/metrics-answer',
]);

export function isClusterMessage(message: unknown): message is ClusterMessage {
  return (
    typeof message === 'object' &&
    message !== null &&
    KINDS.has(String((message as { kind?: unknown }).kind))
  );
}
