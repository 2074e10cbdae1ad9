import cluster from 'node:cluster';
import type { Registry } from 'prom-client';
import { isClusterMessage, type ClusterMessage } from './messages.js';

/**
 * A cluster worker's side of the primary's work (primary.ts): which worker it is, for its log
 * lines, and its part in `/metrics`. The worker answers the primary's requests for its own metrics,
 * and when a scrape reaches it, asks the primary for everyone's, summed.
 */
export interface WorkerRole {
  /** Node's cluster worker id: 1 to N at start, then counting on as workers are replaced. */
  readonly id: number;
  /**
   * Lets the primary read `registry`, and returns what `GET /metrics` answers in this worker: every
   * listening worker's metrics summed, with the primary's own. Rejects when that cannot be had.
   */
  readonly shareMetrics: (registry: Registry) => () => Promise<string>;
}

/** A scrape waits this long for the primary, which itself waits at most COLLECT_TIMEOUT_MS for workers. */
const ANSWER_TIMEOUT_MS = 5_000;

/** The IPC channel to the primary: `process` in a worker; a test may pass its own. */
export interface PrimaryChannel {
  readonly send: (message: ClusterMessage) => void;
  readonly onMessage: (listener: (message: unknown) => void) => void;
}

/** The role of the cluster worker this process is; only called where `cluster.isWorker`. */
export function workerRole(): WorkerRole {
  const id = cluster.worker?.id ?? 0;
  const channel: PrimaryChannel = {
    send: (message) => {
      // Only false once the channel is closed, when the primary is gone and this worker ends too.
      process.send?.(message);
    },
    onMessage: (listener) => process.on('message', listener),
  };
  return { id, shareMetrics: (registry) => shareMetrics(registry, channel) };
}

interface Waiting {
  readonly resolve: (text: string) => void;
  readonly reject: (reason: Error) => void;
  readonly timer: NodeJS.Timeout;
}

export function shareMetrics(registry: Registry, channel: PrimaryChannel): () => Promise<string> {
  const waiting = new Map<number, Waiting>();
  let nextAsk = 1;
  channel.onMessage((message) => {
    if (!isClusterMessage(message)) {
      return;
    }
    if (message.kind === 'oxygen-checker/metrics-collect') {
      const { collect } = message;
      registry.getMetricsAsJSON().then(
        (metrics) => channel.send({ kind: 'oxygen-checker/metrics-part', collect, metrics }),
        // No metrics: the primary then refuses the scrape rather than sum a part of the cluster.
        () => channel.send({ kind: 'oxygen-checker/metrics-part', collect }),
      );
      return;
    }
    if (message.kind === 'oxygen-checker/metrics-answer') {
      const call = waiting.get(message.ask);
      if (call === undefined) {
        return;
      }
      waiting.delete(message.ask);
      clearTimeout(call.timer);
      if (message.text === undefined) {
        call.reject(new Error(`cluster metrics: ${message.failed ?? 'no answer'}`));
      } else {
        call.resolve(message.text);
      }
    }
  });
  return () =>
    new Promise<string>((resolve, reject) => {
      const ask = nextAsk;
      nextAsk += 1;
      const timer = setTimeout(() => {
        waiting.delete(ask);
        reject(new Error('cluster metrics: the primary did not answer in time'));
      }, ANSWER_TIMEOUT_MS);
      waiting.set(ask, { resolve, reject, timer });
      channel.send({ kind: 'oxygen-checker/metrics-ask', ask });
    });
}
