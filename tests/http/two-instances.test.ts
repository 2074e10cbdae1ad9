import { randomBytes, randomUUID } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { requestMoment, retimeRequest } from '../../src/cli/retime-request.js';
import { larkspurPolicy, policyFolder } from '../live-policy/support/policy-files.js';
import { EHR_ES384, EHR_ISS } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { createScratchDatabase, type ScratchDatabase } from '../store/support/scratch-database.js';
import { POSTGRES_SKIP_REASON } from '../store/support/store-kinds.js';
import { killServerProcesses, runServerProcess, type ServerProcess } from './support/server-process.js';
import { writeLarkspurTrustFile } from './support/trust-file.js';

/**
 * Two service processes on different ports sharing one PostgreSQL database, as a hospital group runs
 * them behind a load balancer (issue 10): feedback posted to one shows on the other's review API, a
 * token id used on one is refused on the other, a policy reload on one leaves the other as it was,
 * and killing one in the middle of a burst loses no write it acknowledged. Production mode, with
 * tokens signed here and the review pages behind a trusted proxy header.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const PUBLIC_URL = 'https://cds.larkspur-bay.example';
const SIGN_PATH = '/cds-services/oxygen-order-sign';
const EXAMPLE = join(ROOT, 'examples', 'order-sign-pneumonia-above-target.json');
/** Starting the service under tsx on a loaded 2-core machine takes a few seconds; two take longer. */
const SLOW_MS = 120_000;

let dir = '';
let databaseUrl = '';
let scratch: ScratchDatabase | undefined;

beforeAll(async () => {
  if (POSTGRES_SKIP_REASON !== undefined) {
    return;
  }
  scratch = await createScratchDatabase('two_instances_test');
  databaseUrl = scratch.url;

  dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-two-instances-'));
  writeLarkspurTrustFile(dir);
  // Instances sharing a database share the secrets too (src/store/README.md, "PostgreSQL").
  writeFileSync(join(dir, 'patient-key.secret'), randomBytes(32).toString('hex'), { mode: 0o600 });
  writeFileSync(join(dir, 'review-link.secret'), randomBytes(32).toString('hex'), { mode: 0o600 });
}, SLOW_MS);

afterAll(async () => {
  await scratch?.drop();
  if (dir !== '') {
    rmSync(dir, { recursive: true, force: true });
  }
});

beforeEach((context) => {
  context.skip(POSTGRES_SKIP_REASON !== undefined, POSTGRES_SKIP_REASON);
});
afterEach(() => {
  killServerProcesses();
});

interface Instance {
  readonly process: ServerProcess;
  readonly url: string;
}

async function startInstance(policyPath = join(ROOT, 'policies', 'based-on-bts-2017.yaml')): Promise<Instance> {
  const started = runServerProcess({
    OXYGEN_CHECKER_MODE: 'production',
    OXYGEN_CHECKER_POLICY: policyPath,
    OXYGEN_CHECKER_TRUST: join(dir, 'trust.yaml'),
    OXYGEN_CHECKER_PUBLIC_URL: PUBLIC_URL,
    OXYGEN_CHECKER_PATIENT_KEY_FILE: join(dir, 'patient-key.secret'),
    OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE: join(dir, 'review-link.secret'),
    OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-Authenticated-User',
    OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '127.0.0.1',
    DATABASE_URL: databaseUrl,
  });
  const listening = await Promise.race([
    started.waitForLine('oxygen-order-checker listening'),
    started.exit.then(({ code }) => {
      throw new Error(`the service exited (${String(code)}) before listening`);
    }),
  ]);
  return { process: started, url: String(listening['url']) };
}

function token(aud: string): string {
  const nowS = Math.floor(Date.now() / 1000);
  return signToken(EHR_ES384, { iss: EHR_ISS, aud, iat: nowS, exp: nowS + 300, jti: randomUUID() });
}

async function issueCards(instance: Instance): Promise<string[]> {
  const example = JSON.parse(readFileSync(EXAMPLE, 'utf8')) as unknown;
  const moment = requestMoment(example);
  if (moment === undefined) {
    throw new Error('the example has no moment to retime from');
  }
  const answer = await fetch(`${instance.url}${SIGN_PATH}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', authorization: `Bearer ${token(`${PUBLIC_URL}${SIGN_PATH}`)}` },
    // a hook call of its own: card uuids are stable per hookInstance
    body: JSON.stringify({ ...(retimeRequest(example, moment, new Date()) as object), hookInstance: randomUUID() }),
  });
  expect(answer.status).toBe(200);
  return ((await answer.json()) as { cards: { uuid: string }[] }).cards.map((card) => card.uuid);
}

function sendFeedback(instance: Instance, card: string, outcomeTimestamp: string): Promise<Response> {
  return fetch(`${instance.url}${SIGN_PATH}/feedback`, {
    method: 'POST',
    headers: {
      'content-type': 'application/json',
      authorization: `Bearer ${token(`${PUBLIC_URL}${SIGN_PATH}/feedback`)}`,
    },
    // CDS Hooks 2.0 §Feedback: an overridden outcome may come without a reason; accepted needs suggestions
    body: JSON.stringify({ feedback: [{ card, outcome: 'overridden', outcomeTimestamp }] }),
  });
}

async function reviewedFeedback(instance: Instance, card: string): Promise<string[]> {
  const answer = await fetch(`${instance.url}/review/api/advisories/${card}`, {
    headers: { 'x-authenticated-user': 'ward7.reviewer' },
  });
  expect(answer.status).toBe(200);
  return ((await answer.json()) as { feedback: { outcomeTimestamp: string }[] }).feedback.map((f) => f.outcomeTimestamp);
}

describe('two instances sharing one PostgreSQL database', () => {
  it('shows feedback posted to one on the other, and refuses on one a token id used on the other', async () => {
    const [a, b] = await Promise.all([startInstance(), startInstance()]);
    const [card] = await issueCards(a);
    if (card === undefined) {
      throw new Error('the example gave no card');
    }
    const posted = await sendFeedback(a, card, '2026-03-14T09:41:00.000Z');
    expect(posted.status).toBe(200);
    expect(await reviewedFeedback(b, card)).toStrictEqual(['2026-03-14T09:41:00.000Z']);

    // CDS Hooks 2.0 §Trusting CDS Clients: a jti is a nonce; a replay is refused (401) on any instance
    const once = token(`${PUBLIC_URL}/cds-services`);
    const first = await fetch(`${a.url}/cds-services`, { headers: { authorization: `Bearer ${once}` } });
    const replayed = await fetch(`${b.url}/cds-services`, { headers: { authorization: `Bearer ${once}` } });
    expect([first.status, replayed.status]).toStrictEqual([200, 401]);
  }, SLOW_MS);

  it('reloads the policy on one instance on SIGHUP and leaves the other as it was, still answering', async () => {
    const folders = [policyFolder(larkspurPolicy('1.0.0')), policyFolder(larkspurPolicy('1.0.0'))];
    const [a, b] = await Promise.all(folders.map((folder) => startInstance(folder.policyPath)));
    if (a === undefined || b === undefined) {
      throw new Error('two instances expected');
    }
    const policyOf = async (instance: Instance): Promise<unknown> => {
      const answer = await fetch(`${instance.url}/policy`, { headers: { 'x-authenticated-user': 'ward7.reviewer' } });
      expect(answer.status).toBe(200);
      return ((await answer.json()) as { version: unknown }).version;
    };

    folders[0]?.write(larkspurPolicy('1.1.0'));
    a.process.child.kill('SIGHUP');
    expect(await a.process.waitForLine('policy reloaded')).toMatchObject({ policyVersion: '1.1.0' });
    expect([await policyOf(a), await policyOf(b)]).toStrictEqual(['1.1.0', '1.0.0']);
    expect(b.process.lines().some((line) => String(line['msg']).startsWith('policy reload'))).toBe(false);
    // both go on answering, and each sees the other's audit trail
    const [fromA] = await issueCards(a);
    const [fromB] = await issueCards(b);
    expect(fromA).toBeDefined();
    expect(fromB).toBeDefined();
    expect(fromA).not.toBe(fromB);
    expect(await reviewedFeedback(a, fromB ?? '')).toStrictEqual([]);
    expect(await reviewedFeedback(b, fromA ?? '')).toStrictEqual([]);
  }, SLOW_MS);

  it('loses no acknowledged write when one instance is killed in the middle of a burst', async () => {
    const [a, b] = await Promise.all([startInstance(), startInstance()]);
    const cards = await issueCards(a);
    const acknowledged: { card: string; outcomeTimestamp: string }[] = [];
    let sent = 0;
    let killed = false;
    const worker = async (): Promise<void> => {
      while (sent < 2000 && !killed) {
        const n = sent;
        sent += 1;
        const card = cards[n % cards.length] ?? '';
        // one distinct decision per item: a changed outcome time is a new record, not a repeat
        const outcomeTimestamp = new Date(Date.UTC(2026, 2, 14, 8, 0, 0) + n * 1000).toISOString();
        try {
          const answer = await sendFeedback(a, card, outcomeTimestamp);
          await answer.arrayBuffer();
          if (answer.status === 200) {
            acknowledged.push({ card, outcomeTimestamp });
          }
        } catch {
          return; // the instance was killed: nothing more can be acknowledged
        }
        if (acknowledged.length >= 60 && !killed) {
          killed = true;
          a.process.child.kill('SIGKILL');
        }
      }
    };
    await Promise.all([1, 2, 3, 4, 5, 6].map(() => worker()));
    await a.process.exit;
    expect(killed).toBe(true);
    expect(acknowledged.length).toBeGreaterThanOrEqual(60);
    expect(acknowledged.length).toBeLessThan(2000);

    const stored = new Set<string>();
    for (const card of cards) {
      for (const at of await reviewedFeedback(b, card)) {
        stored.add(`${card} ${at}`);
      }
    }
    expect(acknowledged.filter((item) => !stored.has(`${item.card} ${item.outcomeTimestamp}`))).toStrictEqual([]);
  }, SLOW_MS);
});
