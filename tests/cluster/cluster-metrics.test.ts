import { Counter, Gauge, Registry } from 'prom-client';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createMetricsCollector, createPrimaryMetrics, type CollectTarget } from '../../src/cluster/cluster-metrics.js';
import type { MetricsAnswer, MetricsCollect, WorkerMetrics } from '../../src/cluster/messages.js';

/**
 * The primary's side of `/metrics` in a cluster (src/cluster/cluster-metrics.ts), with workers
 * played by registries in this process: the answer is every worker's metrics summed with the
 * primary's own, and a scrape that misses a worker is refused, never answered with a partial sum.
 */

afterEach(() => {
  vi.useRealTimers();
});

/** A worker's registry with the service's request counter and policy gauge (src/http/metrics.ts names). */
function workerRegistry(healthz: number, policyVersion: string): Registry {
  const registry = new Registry();
  const requests = new Counter({
    name: 'oxygen_checker_http_requests_total',
    help: 'requests',
    labelNames: ['route', 'status'],
    registers: [registry],
  });
  requests.inc({ route: 'healthz', status: '200' }, healthz);
  new Gauge({ name: 'oxygen_checker_policy_info', help: 'policy', labelNames: ['version'], registers: [registry] }).set(
    { version: policyVersion },
    1,
  );
  return registry;
}

interface Harness {
  readonly sent: Map<number, (MetricsCollect | MetricsAnswer)[]>;
  readonly target: (id: number) => CollectTarget;
}

function harness(): Harness {
  const sent = new Map<number, (MetricsCollect | MetricsAnswer)[]>();
  return {
    sent,
    target: (id) => ({
      id,
      send: (message) => {
        sent.set(id, [...(sent.get(id) ?? []), message]);
        return true;
      },
    }),
  };
}

function lastAnswer(h: Harness, id: number): MetricsAnswer | undefined {
  return h.sent.get(id)?.filter((m): m is MetricsAnswer => m.kind === 'oxygen-checker/metrics-answer').at(-1);
}

function collectId(h: Harness, id: number): number {
  const message = h.sent.get(id)?.find((m): m is MetricsCollect => m.kind === 'oxygen-checker/metrics-collect');
  if (message === undefined) throw new Error(`worker ${String(id)} was not asked`);
  return message.collect;
}

async function until(check: () => boolean): Promise<void> {
  for (let i = 0; i < 100 && !check(); i += 1) {
    await Promise.resolve();
    await new Promise((resolve) => setImmediate(resolve));
  }
}

describe('cluster metrics collector', () => {
  it('answers the asking worker with every worker summed, and the primary\'s own metrics', async () => {
    const h = harness();
    const primary = createPrimaryMetrics();
    primary.workersListening(3);
    const ids = [1, 2, 3];
    const collector = createMetricsCollector({ primary, targets: () => ids.map(h.target) });
    collector.answer(h.target(2), 7);
    const parts: Record<number, WorkerMetrics> = {
      1: await workerRegistry(4, '1.1.0').getMetricsAsJSON(),
      2: await workerRegistry(5, '1.1.0').getMetricsAsJSON(),
      3: await workerRegistry(0, '1.1.0').getMetricsAsJSON(),
    };
    for (const id of ids) {
      expect(lastAnswer(h, 2)).toBeUndefined();
      collector.part(id, collectId(h, id), parts[id]);
    }
    await until(() => lastAnswer(h, 2) !== undefined);
    const answer = lastAnswer(h, 2);
    expect(answer?.ask).toBe(7);
    const text = answer?.text ?? '';
    expect(text).toContain('oxygen_checker_http_requests_total{route="healthz",status="200"} 9\n');
    expect(text).toContain('oxygen_checker_policy_info{version="1.1.0"} 3\n');
    expect(text).toContain('oxygen_checker_workers 3\n');
    expect(text).toContain('oxygen_checker_worker_restarts_total 0\n');
  });

  it('shows workers that disagree on the policy as two series', async () => {
    const h = harness();
    const collector = createMetricsCollector({ primary: createPrimaryMetrics(), targets: () => [h.target(1), h.target(2)] });
    collector.answer(h.target(1), 1);
    collector.part(1, collectId(h, 1), await workerRegistry(1, '1.0.0').getMetricsAsJSON());
    collector.part(2, collectId(h, 2), await workerRegistry(1, '1.1.0').getMetricsAsJSON());
    await until(() => lastAnswer(h, 1) !== undefined);
    const text = lastAnswer(h, 1)?.text ?? '';
    expect(text).toContain('oxygen_checker_policy_info{version="1.0.0"} 1\n');
    expect(text).toContain('oxygen_checker_policy_info{version="1.1.0"} 1\n');
  });

  it('refuses the scrape when a worker sends no metrics, or none in time, rather than sum a part', async () => {
    const h = harness();
    const collector = createMetricsCollector({ primary: createPrimaryMetrics(), targets: () => [h.target(1), h.target(2)] });
    collector.answer(h.target(1), 1);
    collector.part(1, collectId(h, 1), await workerRegistry(3, '1.0.0').getMetricsAsJSON());
    collector.part(2, collectId(h, 2), undefined);
    expect(lastAnswer(h, 1)?.text).toBeUndefined();
    expect(lastAnswer(h, 1)?.failed).toMatch(/could not read/);

    vi.useFakeTimers();
    const late = harness();
    const waiting = createMetricsCollector({
      primary: createPrimaryMetrics(),
      targets: () => [late.target(1), late.target(2)],
      timeoutMs: 2000,
    });
    waiting.answer(late.target(1), 5);
    waiting.part(1, collectId(late, 1), await workerRegistry(3, '1.0.0').getMetricsAsJSON());
    vi.advanceTimersByTime(2000);
    expect(lastAnswer(late, 1)).toMatchObject({ ask: 5, failed: '1 of 2 workers did not send their metrics in time' });
    // a part arriving after the refusal changes nothing
    waiting.part(2, collectId(late, 2), await workerRegistry(3, '1.0.0').getMetricsAsJSON());
    expect(late.sent.get(1)?.filter((m) => m.kind === 'oxygen-checker/metrics-answer')).toHaveLength(1);
  });

  it('ignores a part from a worker that was not asked', async () => {
    const h = harness();
    const collector = createMetricsCollector({ primary: createPrimaryMetrics(), targets: () => [h.target(1)] });
    collector.answer(h.target(1), 1);
    const collect = collectId(h, 1);
    collector.part(9, collect, await workerRegistry(100, '9.9.9').getMetricsAsJSON());
    collector.part(1, collect, await workerRegistry(2, '1.0.0').getMetricsAsJSON());
    await until(() => lastAnswer(h, 1) !== undefined);
    const text = lastAnswer(h, 1)?.text ?? '';
    expect(text).toContain('oxygen_checker_http_requests_total{route="healthz",status="200"} 2\n');
    expect(text).not.toContain('9.9.9');
  });
});
