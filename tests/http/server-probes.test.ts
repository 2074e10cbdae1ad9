import { fileURLToPath } from 'node:url';
import { describe, expect, it, vi } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { startServer } from '../../src/server.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { bundledSnapshot } from './test-app.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));

describe('the started demo server', () => {
  it('becomes ready and serves its metrics on loopback, with the process metrics and the policy in force', async () => {
    const log = createMemoryLog();
    const result = await startServer(
      { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir() },
      ROOT,
      createLogger({ level: 'info', destination: log.stream }),
    );
    if (result.kind !== 'started') throw new Error(result.problems);
    try {
      // Polled as an orchestrator's readiness probe would be: the store's thread may still be starting.
      await vi.waitFor(
        async () => {
          expect((await fetch(`${result.started.url}/readyz`)).status).toBe(200);
        },
        { timeout: 30_000, interval: 200 },
      );
      const metrics = await fetch(`${result.started.url}/metrics`);
      expect(metrics.status).toBe(200);
      const text = await metrics.text();
      const snapshot = await bundledSnapshot();
      expect(text).toContain(
        `oxygen_checker_policy_info{id="${snapshot.policy.id}",version="${snapshot.policy.version}",hash="${snapshot.contentHash}"} 1`,
      );
      expect(text).toMatch(/^oxygen_checker_process_cpu_user_seconds_total \d/m);
      expect(text).toMatch(/^oxygen_checker_http_requests_total\{route="readyz",status="200"\} [1-9]/m);
    } finally {
      await result.started.close();
    }
  });
});
