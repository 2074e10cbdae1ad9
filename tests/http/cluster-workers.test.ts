import { randomUUID } from 'node:crypto';
import { request } from 'node:http';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { requestMoment, retimeRequest } from '../../src/cli/retime-request.js';
import { larkspurPolicy, policyFolder, type PolicyFolder } from '../live-policy/support/policy-files.js';
import { EHR_ES384, EHR_ISS } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { createScratchDatabase, type ScratchDatabase } from '../store/support/scratch-database.js';
import { POSTGRES_SKIP_REASON } from '../store/support/store-kinds.js';
import { killServerProcesses, runServerProcess, type ServerProcess } from './support/server-process.js';
import { writeLarkspurTrustFile } from './support/trust-file.js';

/**
 * `OXYGEN_CHECKER_WORKERS=2`: one primary and two worker processes sharing one port, on the embedded
 * SQLite store, in production mode with tokens signed here (src/cluster). Every call goes on a
 * connection of its own, so the primary hands the calls round to both workers; each answer is tied
 * to the worker that wrote it through its `X-Request-Id` and that worker's request log line. The
 * state the workers share is the store's: a token id used on one worker is refused on the other,
 * feedback posted through one is read through the other. /metrics sums both workers; SIGHUP reloads
 * the policy in both; a worker killed in the middle of a burst loses no acknowledged write and is
 * replaced; SIGTERM ends every process. The same on PostgreSQL, when a test database is named: the
 * primary migrates it once before forking, and the workers share its replay cache and feedback.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const PUBLIC_URL = 'https://cds.larkspur-bay.example';
const SIGN_PATH = '/cds-services/oxygen-order-sign';
const EXAMPLE = join(ROOT, 'examples', 'order-sign-pneumonia-above-target.json');
/** Three processes starting under tsx on a loaded 2-core machine take several seconds. */
const SLOW_MS = 120_000;

interface Answer {
  readonly status: number;
  readonly text: string;
  readonly requestId: string;
}

/** One call on a connection of its own (no keep-alive), so the cluster may give it to any worker. */
function call(
  url: string,
  path: string,
  options: { readonly method?: string; readonly headers?: Record<string, string>; readonly body?: string } = {},
): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const req = request(
      `${url}${path}`,
      { method: options.method ?? 'GET', headers: options.headers ?? {}, agent: false },
      (res) => {
        let text = '';
        res.setEncoding('utf8');
        res.on('data', (chunk: string) => {
          text += chunk;
        });
        res.on('end', () => resolve({ status: res.statusCode ?? 0, text, requestId: String(res.headers['x-request-id'] ?? '') }));
      },
    );
    req.on('error', reject);
    // A call that hangs fails the test rather than stalling it.
    req.setTimeout(10_000, () => req.destroy(new Error(`no answer to ${path} in 10 s`)));
    req.end(options.body);
  });
}

function token(aud: string): string {
  const nowS = Math.floor(Date.now() / 1000);
  return signToken(EHR_ES384, { iss: EHR_ISS, aud, iat: nowS, exp: nowS + 300, jti: randomUUID() });
}

const bearer = (jwt: string): Record<string, string> => ({ authorization: `Bearer ${jwt}` });
const REVIEWER = { 'x-authenticated-user': 'ward7.reviewer' };

/** The worker whose request line carries this request id (log lines are written as answers close). */
async function workerOf(service: ServerProcess, requestId: string): Promise<number> {
  for (let tries = 0; tries < 50; tries += 1) {
    const line = service.lines().find((l) => l['requestId'] === requestId && l['msg'] === 'request');
    if (line !== undefined) {
      return Number(line['worker']);
    }
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
  throw new Error(`no request line for ${requestId}`);
}

/** The value of one sample in Prometheus text, or undefined when the series is absent. */
function sample(text: string, series: string): number | undefined {
  const line = text.split('\n').find((l) => l.startsWith(`${series} `));
  return line === undefined ? undefined : Number(line.slice(series.length + 1));
}

/** Waits (up to 20 s) until `done` holds over the log lines written so far. */
async function waitForLines(service: ServerProcess, done: (lines: Record<string, unknown>[]) => boolean): Promise<void> {
  for (let tries = 0; tries < 400; tries += 1) {
    if (done(service.lines())) return;
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  throw new Error('the log lines awaited did not come');
}

function isRunning(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

/** One hook call of its own (card uuids are stable per hookInstance); the uuids of its cards. */
async function issueCards(url: string): Promise<string[]> {
  const example = JSON.parse(readFileSync(EXAMPLE, 'utf8')) as unknown;
  const moment = requestMoment(example);
  if (moment === undefined) {
    throw new Error('the example has no moment to retime from');
  }
  const hook = await call(url, SIGN_PATH, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...bearer(token(`${PUBLIC_URL}${SIGN_PATH}`)) },
    body: JSON.stringify({ ...(retimeRequest(example, moment, new Date()) as object), hookInstance: randomUUID() }),
  });
  expect(hook.status).toBe(200);
  const cards = (JSON.parse(hook.text) as { cards: { uuid: string }[] }).cards.map((card) => card.uuid);
  expect(cards.length).toBeGreaterThan(0);
  return cards;
}

/** CDS Hooks 2.0 §Feedback: an overridden outcome may come without a reason. */
function postFeedback(url: string, card: string, outcomeTimestamp: string): Promise<Answer> {
  return call(url, `${SIGN_PATH}/feedback`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...bearer(token(`${PUBLIC_URL}${SIGN_PATH}/feedback`)) },
    body: JSON.stringify({ feedback: [{ card, outcome: 'overridden', outcomeTimestamp }] }),
  });
}

/** Uses `jwt` once, then again until a worker other than the first one's has refused it (401 each time). */
async function expectReplayRefusedElsewhere(service: ServerProcess, url: string, jwt: string): Promise<void> {
  const first = await call(url, '/cds-services', { headers: bearer(jwt) });
  expect(first.status).toBe(200);
  const firstWorker = await workerOf(service, first.requestId);
  const refusedBy = new Set<number>();
  for (let i = 0; i < 6; i += 1) {
    const replayed = await call(url, '/cds-services', { headers: bearer(jwt) });
    expect(replayed.status).toBe(401);
    refusedBy.add(await workerOf(service, replayed.requestId));
  }
  // refused by the worker that did not see the first use, not only by the one that did
  expect([...refusedBy].some((worker) => worker !== firstWorker)).toBe(true);
}

describe('two worker processes sharing one port and one SQLite store', () => {
  let dir = '';
  let folder: PolicyFolder;
  let service: ServerProcess;
  let url = '';

  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-cluster-'));
    writeLarkspurTrustFile(dir);
    folder = policyFolder(larkspurPolicy('1.0.0'));
    // No secret files given: the primary creates them in the data directory once, before forking.
    service = runServerProcess({
      OXYGEN_CHECKER_WORKERS: '2',
      OXYGEN_CHECKER_MODE: 'production',
      OXYGEN_CHECKER_POLICY: folder.policyPath,
      OXYGEN_CHECKER_TRUST: join(dir, 'trust.yaml'),
      OXYGEN_CHECKER_PUBLIC_URL: PUBLIC_URL,
      OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-Authenticated-User',
      OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '127.0.0.1',
      OXYGEN_CHECKER_METRICS: 'on',
    });
    const listening = await service.waitForLine('oxygen-order-checker cluster listening');
    url = String(listening['url']);
  }, SLOW_MS);

  afterAll(() => {
    killServerProcesses();
    rmSync(dir, { recursive: true, force: true });
  });

  it('spreads calls over both workers, and refuses on either a token id used on one', async () => {
    const discovery = `${PUBLIC_URL}/cds-services`;
    const answered = new Set<number>();
    for (let i = 0; i < 12; i += 1) {
      const answer = await call(url, '/cds-services', { headers: bearer(token(discovery)) });
      expect(answer.status).toBe(200);
      answered.add(await workerOf(service, answer.requestId));
    }
    expect([...answered].sort()).toStrictEqual([1, 2]);
    // readiness reads the shared store from whichever worker answers
    const ready = new Set<number>();
    for (let i = 0; i < 4; i += 1) {
      const answer = await call(url, '/readyz');
      expect(answer.status).toBe(200);
      ready.add(await workerOf(service, answer.requestId));
    }
    expect(ready.size).toBe(2);

    // CDS Hooks 2.0 §Trusting CDS Clients: a jti is a nonce; a second use is refused (401)
    await expectReplayRefusedElsewhere(service, url, token(discovery));
  }, SLOW_MS);

  it('shows feedback posted through one worker on the review API of both', async () => {
    const [card = ''] = await issueCards(url);
    const posted = await postFeedback(url, card, '2026-03-14T09:41:00.000Z');
    expect(posted.status).toBe(200);
    const postedBy = await workerOf(service, posted.requestId);
    const readBy = new Set<number>();
    for (let i = 0; i < 6; i += 1) {
      const review = await call(url, `/review/api/advisories/${card}`, { headers: REVIEWER });
      expect(review.status).toBe(200);
      const feedback = (JSON.parse(review.text) as { feedback: { outcomeTimestamp: string }[] }).feedback;
      expect(feedback.map((f) => f.outcomeTimestamp)).toStrictEqual(['2026-03-14T09:41:00.000Z']);
      readBy.add(await workerOf(service, review.requestId));
    }
    expect(readBy.has(postedBy === 1 ? 2 : 1)).toBe(true);
  }, SLOW_MS);

  it('answers /metrics with both workers summed, whichever worker the scrape reaches', async () => {
    const series = 'oxygen_checker_http_requests_total{route="healthz",status="200"}';
    const before = sample((await call(url, '/metrics')).text, series) ?? 0;
    for (let i = 0; i < 10; i += 1) {
      expect((await call(url, '/healthz')).status).toBe(200);
    }
    // every call counted, though each worker answered only some of them
    for (let i = 0; i < 3; i += 1) {
      const scrape = await call(url, '/metrics');
      expect(scrape.status).toBe(200);
      expect(sample(scrape.text, series)).toBe(before + 10);
      expect(sample(scrape.text, 'oxygen_checker_workers')).toBe(2);
      // no worker or process id as a label: the series do not multiply with restarts
      expect(scrape.text).not.toMatch(/\b(worker|pid)="/);
    }
  }, SLOW_MS);

  it('reloads the policy in every worker on SIGHUP to the primary', async () => {
    folder.write(larkspurPolicy('1.1.0'));
    const reloadsBefore = service.lines().filter((l) => String(l['msg']).startsWith('policy reloaded')).length;
    service.child.kill('SIGHUP');
    await waitForLines(service, (lines) => lines.filter((l) => String(l['msg']).startsWith('policy reloaded')).length >= reloadsBefore + 2);
    const reloaded = service.lines().filter((l) => String(l['msg']).startsWith('policy reloaded')).slice(reloadsBefore);
    expect(reloaded.map((l) => l['worker']).sort()).toStrictEqual([1, 2]);
    const scrape = await call(url, '/metrics');
    // policy_info sums over workers: both run 1.1.0, none still runs 1.0.0
    expect(scrape.text).toMatch(/oxygen_checker_policy_info\{id="larkspur-bay-adult",version="1\.1\.0",hash="[0-9a-f]{64}"\} 2\n/);
    expect(scrape.text).not.toContain('version="1.0.0"');
  }, SLOW_MS);

  it('loses no acknowledged write when a worker is killed mid-burst, replaces it and keeps answering; SIGTERM then ends every process', async () => {
    const cards = await issueCards(url);
    const started = service.lines().filter((l) => l['msg'] === 'worker started');
    const victim = Number(started[0]?.['pid']);
    const acknowledged: string[] = [];
    let sent = 0;
    let killed = false;
    const sender = async (): Promise<void> => {
      while (sent < 160) {
        const n = sent;
        sent += 1;
        // one distinct decision per item: a changed outcome time is a new record, not a repeat
        const outcomeTimestamp = new Date(Date.UTC(2026, 2, 14, 8, 0, 0) + n * 1000).toISOString();
        const card = cards[n % cards.length] ?? '';
        try {
          const answer = await postFeedback(url, card, outcomeTimestamp);
          if (answer.status === 200) acknowledged.push(`${card} ${outcomeTimestamp}`);
        } catch {
          // the connection went to the worker as it died: not acknowledged, so not owed
        }
        if (acknowledged.length >= 40 && !killed) {
          killed = true;
          process.kill(victim, 'SIGKILL');
        }
      }
    };
    await Promise.all([1, 2, 3, 4].map(() => sender()));
    expect(killed).toBe(true);
    // A connection handed to the worker as it died dies with it; once the primary has seen the
    // death, every new one goes to the survivor, which answers while the replacement starts.
    await waitForLines(service, (lines) => lines.some((l) => String(l['msg']).startsWith('worker stopped unexpectedly')));
    expect(acknowledged.length).toBeGreaterThan(40);
    const stored = new Set<string>();
    for (const card of cards) {
      const review = await call(url, `/review/api/advisories/${card}`, { headers: REVIEWER });
      expect(review.status).toBe(200);
      for (const f of (JSON.parse(review.text) as { feedback: { outcomeTimestamp: string }[] }).feedback) {
        stored.add(`${card} ${f.outcomeTimestamp}`);
      }
    }
    expect(acknowledged.filter((item) => !stored.has(item))).toStrictEqual([]);
    for (let i = 0; i < 4; i += 1) {
      expect((await call(url, '/healthz')).status).toBe(200);
    }
    await waitForLines(service, (lines) => lines.filter((l) => l['msg'] === 'worker started').length === 3);
    const replacementId = Number(service.lines().filter((l) => l['msg'] === 'worker started')[2]?.['worker']);
    expect(replacementId).toBe(3);
    await waitForLines(service, (lines) =>
      lines.some((l) => l['worker'] === replacementId && String(l['msg']).startsWith('oxygen-order-checker listening')),
    );
    const answered = new Set<number>();
    for (let i = 0; i < 8; i += 1) {
      const answer = await call(url, '/healthz');
      expect(answer.status).toBe(200);
      answered.add(await workerOf(service, answer.requestId));
    }
    expect(answered.has(replacementId)).toBe(true);
    const scrape = await call(url, '/metrics');
    expect(sample(scrape.text, 'oxygen_checker_worker_restarts_total')).toBe(1);
    expect(sample(scrape.text, 'oxygen_checker_workers')).toBe(2);

    const allPids = service.lines().filter((l) => l['msg'] === 'worker started').map((l) => Number(l['pid']));
    service.child.kill('SIGTERM');
    expect(await service.exit).toStrictEqual({ code: 0, signal: null });
    expect(allPids.filter(isRunning)).toStrictEqual([]);
    expect(service.lines().filter((l) => l['msg'] === 'oxygen-order-checker stopped').map((l) => l['worker']).sort()).toStrictEqual([2, 3]);
  }, SLOW_MS);
});

describe('a cluster whose settings are wrong', () => {
  afterAll(() => {
    killServerProcesses();
  });

  it('refuses in the primary with the single process\'s message, and forks no worker', async () => {
    // production without its own policy file: the message a single process gives (env-config.ts)
    const service = runServerProcess({ OXYGEN_CHECKER_WORKERS: '2', OXYGEN_CHECKER_MODE: 'production' });
    let stderr = '';
    service.child.stderr?.on('data', (chunk: Buffer) => {
      stderr += chunk.toString();
    });
    expect(await service.exit).toStrictEqual({ code: 1, signal: null });
    expect(stderr).toContain('oxygen-order-checker refused to start:');
    expect(stderr).toContain('OXYGEN_CHECKER_POLICY: production mode needs the local policy file set explicitly');
    expect(service.lines().filter((l) => l['msg'] === 'worker started')).toStrictEqual([]);
  }, SLOW_MS);
});

describe('two worker processes sharing one port and one PostgreSQL database', () => {
  let dir = '';
  let scratch: ScratchDatabase | undefined;
  let databaseUrl = '';

  beforeAll(async () => {
    if (POSTGRES_SKIP_REASON !== undefined) {
      return;
    }
    scratch = await createScratchDatabase('cluster_test');
    databaseUrl = scratch.url;
    dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-cluster-pg-'));
    writeLarkspurTrustFile(dir);
  }, SLOW_MS);

  beforeEach((context) => {
    context.skip(POSTGRES_SKIP_REASON !== undefined, POSTGRES_SKIP_REASON);
  });

  afterAll(async () => {
    killServerProcesses();
    await scratch?.drop();
    if (dir !== '') rmSync(dir, { recursive: true, force: true });
  });

  it('migrates once in the primary before forking, and shares the replay cache and feedback between workers', async () => {
    const service = runServerProcess({
      OXYGEN_CHECKER_WORKERS: '2',
      OXYGEN_CHECKER_MODE: 'production',
      OXYGEN_CHECKER_POLICY: join(ROOT, 'policies', 'based-on-bts-2017.yaml'),
      OXYGEN_CHECKER_TRUST: join(dir, 'trust.yaml'),
      OXYGEN_CHECKER_PUBLIC_URL: PUBLIC_URL,
      OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-Authenticated-User',
      OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '127.0.0.1',
      DATABASE_URL: databaseUrl,
    });
    const url = String((await service.waitForLine('oxygen-order-checker cluster listening'))['url']);
    // every step applied once, all before the first worker was forked
    const firstFork = Number(service.lines().find((l) => l['msg'] === 'worker started')?.['time']);
    const direct = new pg.Client({ connectionString: databaseUrl });
    await direct.connect();
    const steps = await direct
      .query<{ version: number; applied_ms: string }>(
        'SELECT version, (extract(epoch from applied_at) * 1000)::bigint::text AS applied_ms FROM schema_migration',
      )
      .finally(() => direct.end());
    const versions = steps.rows.map((row) => row.version);
    expect(versions.length).toBeGreaterThan(0);
    expect(new Set(versions).size).toBe(versions.length);
    expect(Math.max(...steps.rows.map((row) => Number(row.applied_ms)))).toBeLessThanOrEqual(firstFork);

    // CDS Hooks 2.0 §Trusting CDS Clients: a jti is a nonce; a second use is refused (401)
    await expectReplayRefusedElsewhere(service, url, token(`${PUBLIC_URL}/cds-services`));

    const [card = ''] = await issueCards(url);
    expect((await postFeedback(url, card, '2026-03-14T09:41:00.000Z')).status).toBe(200);
    const readBy = new Set<number>();
    for (let i = 0; i < 4; i += 1) {
      const review = await call(url, `/review/api/advisories/${card}`, { headers: REVIEWER });
      expect(review.status).toBe(200);
      const feedback = (JSON.parse(review.text) as { feedback: { outcomeTimestamp: string }[] }).feedback;
      expect(feedback.map((f) => f.outcomeTimestamp)).toStrictEqual(['2026-03-14T09:41:00.000Z']);
      readBy.add(await workerOf(service, review.requestId));
    }
    expect(readBy.size).toBe(2);

    service.child.kill('SIGTERM');
    expect(await service.exit).toStrictEqual({ code: 0, signal: null });
  }, SLOW_MS);
});
