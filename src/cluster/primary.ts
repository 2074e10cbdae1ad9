import cluster, { type Worker } from 'node:cluster';
import type { EnvConfig } from '../config/env-config.js';
import type { Logger } from '../log/logger.js';
import { createMetricsCollector, createPrimaryMetrics, type CollectTarget } from './cluster-metrics.js';
import { isClusterMessage } from './messages.js';
import { createRestartBackoff, type RestartBackoffSettings } from './restart-backoff.js';

/**
 * The primary of a cluster (`OXYGEN_CHECKER_WORKERS` above 1): one process that serves no request.
 * It makes every check a single process makes at start, once (the settings, the policy and cards,
 * the store and its migrations, the secrets, the trust file; server.ts `checkServiceStart`), and
 * refuses to start with the same messages; then it forks the workers, which share the port through
 * node:cluster (the primary accepts connections and hands them round to the workers) and each run
 * the same start as a single process. The shared state (audit trail, feedback, replay cache) is in
 * the store, which every worker opens; what each keeps in memory (key sets fetched, the load
 * limits and per-client shares) is its own.
 *
 * - A worker that stops unexpectedly is replaced, after a back-off when it keeps dying early
 *   (restart-backoff.ts). A worker that stops before any worker ever listened stops the cluster:
 *   the service cannot start (the port taken, say), and the worker said why on stderr.
 * - SIGHUP is passed to every worker (each reloads the policy and logs the outcome); a worker still
 *   starting gets it once it listens.
 * - SIGTERM or SIGINT: every worker is asked to finish (SIGTERM; each drains its calls within
 *   `OXYGEN_CHECKER_SHUTDOWN_GRACE_MS` and closes its store); the primary exits once all have
 *   ended, and kills any still running STOP_MARGIN_MS past the grace time.
 * - `/metrics` in a worker asks the primary for every worker's metrics, summed (cluster-metrics.ts).
 */

/** Beyond the workers' grace time: their store's close and exit. */
export const STOP_MARGIN_MS = 5_000;

type Checked =
  | { readonly kind: 'checked'; readonly config: EnvConfig; readonly log: Logger }
  | { readonly kind: 'refused'; readonly problems: string };

export interface PrimaryDeps {
  /** server.ts `checkServiceStart`, with the fields every primary log line carries. */
  readonly check: (bindings: Readonly<Record<string, unknown>>) => Promise<Checked>;
  readonly backoff?: RestartBackoffSettings;
}

interface Slot {
  readonly worker: Worker;
  readonly startedAtMs: number;
  listening: boolean;
  reloadPending: boolean;
}

/** Runs the primary until the cluster has stopped; resolves with the exit code. */
export async function runPrimary(deps: PrimaryDeps): Promise<number> {
  // Before the checks: a SIGHUP while starting must not end the process (Node's default for it).
  // Workers not yet forked read the files as they then are, so there is nothing to pass on.
  let onReload = (): void => undefined;
  process.on('SIGHUP', () => onReload());
  const checked = await deps.check({ role: 'primary' });
  if (checked.kind === 'refused') {
    process.stderr.write(`oxygen-order-checker refused to start:\n${checked.problems}\n`);
    return 1;
  }
  const { config, log } = checked;
  const wanted = config.workers ?? 1;
  const backoff = createRestartBackoff(deps.backoff);
  const metrics = createPrimaryMetrics();
  const slots = new Map<number, Slot>();
  const restartTimers = new Set<NodeJS.Timeout>();
  let everListening = false;
  let announced = false;
  let exitCode = 0;
  let stopping: { readonly done: () => void; forced: boolean; killTimer?: NodeJS.Timeout } | undefined;
  let finished: (code: number) => void = () => undefined;
  const stopped = new Promise<number>((resolve) => {
    finished = resolve;
  });

  const countListening = (): number => [...slots.values()].filter((slot) => slot.listening).length;
  const targetOf = (worker: Worker): CollectTarget => ({
    id: worker.id,
    send: (message) => worker.isConnected() && worker.send(message),
  });
  const collector = createMetricsCollector({
    primary: metrics,
    targets: () => [...slots.values()].filter((slot) => slot.listening).map((slot) => targetOf(slot.worker)),
  });

  const fork = (): void => {
    const worker = cluster.fork();
    slots.set(worker.id, { worker, startedAtMs: Date.now(), listening: false, reloadPending: false });
    log.info({ worker: worker.id, pid: worker.process.pid }, 'worker started');
  };

  cluster.on('message', (worker, message: unknown) => {
    if (!isClusterMessage(message)) {
      return;
    }
    if (message.kind === 'oxygen-checker/metrics-ask') {
      collector.answer(targetOf(worker), message.ask);
    } else if (message.kind === 'oxygen-checker/metrics-part') {
      collector.part(worker.id, message.collect, message.metrics);
    }
  });

  cluster.on('listening', (worker, address) => {
    const slot = slots.get(worker.id);
    if (slot === undefined) {
      return;
    }
    slot.listening = true;
    everListening = true;
    metrics.workersListening(countListening());
    if (slot.reloadPending) {
      slot.reloadPending = false;
      worker.process.kill('SIGHUP');
    }
    if (!announced && countListening() === wanted) {
      announced = true;
      const host = address.address ?? config.host;
      const url = `http://${host.includes(':') ? `[${host}]` : host}:${String(address.port)}`;
      log.info({ workers: wanted, url }, 'oxygen-order-checker cluster listening: every worker is serving');
    }
  });

  const finishStop = (): void => {
    if (stopping === undefined) {
      return;
    }
    clearTimeout(stopping.killTimer);
    log.info(stopping.forced ? { forced: true } : {}, 'oxygen-order-checker cluster stopped');
    stopping.done();
  };

  const stop = (reason: string): void => {
    if (stopping !== undefined) {
      return;
    }
    stopping = { done: () => finished(exitCode), forced: false };
    for (const timer of restartTimers) {
      clearTimeout(timer);
    }
    restartTimers.clear();
    const graceMs = config.shutdownGraceMs;
    log.info({ reason, workers: slots.size, graceMs }, 'oxygen-order-checker cluster stopping: every worker asked to finish');
    for (const slot of slots.values()) {
      slot.worker.process.kill('SIGTERM');
    }
    const state = stopping;
    state.killTimer = setTimeout(() => {
      state.forced = true;
      for (const slot of slots.values()) {
        log.warn({ worker: slot.worker.id, afterMs: graceMs + STOP_MARGIN_MS }, 'worker still running after the grace time; killed');
        slot.worker.process.kill('SIGKILL');
      }
    }, graceMs + STOP_MARGIN_MS);
    if (slots.size === 0) {
      finishStop();
    }
  };

  cluster.on('exit', (worker, code, signal) => {
    const slot = slots.get(worker.id);
    slots.delete(worker.id);
    metrics.workersListening(countListening());
    if (stopping !== undefined) {
      if (slots.size === 0) {
        finishStop();
      }
      return;
    }
    const ended = { worker: worker.id, code, signal };
    if (!everListening) {
      log.error(ended, 'a worker stopped before the service was listening; the cluster stops (the worker\'s reason is on stderr)');
      exitCode = 1;
      stop('a worker could not start');
      return;
    }
    const ranForMs = Date.now() - (slot?.startedAtMs ?? Date.now());
    const restartInMs = backoff.delayAfter(ranForMs);
    metrics.workerReplaced();
    log.error({ ...ended, ranForMs, restartInMs }, 'worker stopped unexpectedly; a replacement will be started');
    const timer = setTimeout(() => {
      restartTimers.delete(timer);
      if (stopping === undefined) {
        fork();
      }
    }, restartInMs);
    restartTimers.add(timer);
  });

  onReload = (): void => {
    if (stopping !== undefined) {
      return;
    }
    let signalled = 0;
    let pending = 0;
    for (const slot of slots.values()) {
      if (slot.listening) {
        slot.worker.process.kill('SIGHUP');
        signalled += 1;
      } else {
        slot.reloadPending = true;
        pending += 1;
      }
    }
    log.info({ workers: signalled, starting: pending }, 'policy reload passed to the workers');
  };
  process.on('SIGTERM', () => stop('SIGTERM'));
  process.on('SIGINT', () => stop('SIGINT'));

  log.info({ workers: wanted }, 'oxygen-order-checker cluster starting: settings, policy and store checked once');
  for (let i = 0; i < wanted; i += 1) {
    fork();
  }
  return stopped;
}
