import { request as httpRequest } from 'node:http';
import { performance } from 'node:perf_hooks';
import { Worker } from 'node:worker_threads';

/**
 * Callers as separate programs would be: each on its own connection (no shared agent), from a chosen
 * loopback address, which is who a caller is in demo mode (src/http/client-key.ts).
 */

export interface CallerAnswer {
  readonly status: number;
  readonly retryAfter: string | undefined;
  readonly headers: Readonly<Record<string, string | string[] | undefined>>;
  readonly body: unknown;
  /** From just before the request was written to the last byte of the answer, as the caller saw it. */
  readonly elapsedMs: number;
}

/**
 * One call, sent from the test's own thread, shared with the service: fine for a single call, but
 * hundreds would take turns with the service on one event loop and pace themselves to it, so they
 * never arrive together as real callers do. `callAtOnce` sends those from a thread of their own.
 */
export function call(
  url: string,
  body: unknown,
  localAddress = '127.0.0.1',
  headers: Readonly<Record<string, string>> = {},
): Promise<CallerAnswer> {
  return new Promise((resolve, reject) => {
    sendOne(url, JSON.stringify(body), localAddress, headers, resolve, reject);
  });
}

function sendOne(
  url: string,
  raw: string,
  localAddress: string,
  headers: Readonly<Record<string, string>>,
  resolve: (answer: CallerAnswer) => void,
  reject: (error: Error) => void,
): void {
  const started = performance.now();
  const req = httpRequest(
    url,
    {
      method: 'POST',
      agent: false,
      localAddress,
      headers: { ...headers, 'Content-Type': 'application/json', 'Content-Length': String(Buffer.byteLength(raw)) },
    },
    (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => {
        const text = Buffer.concat(chunks).toString('utf8');
        let parsed: unknown;
        try {
          parsed = JSON.parse(text) as unknown;
        } catch {
          parsed = undefined;
        }
        const retryAfter = res.headers['retry-after'];
        resolve({
          status: res.statusCode ?? 0,
          retryAfter: typeof retryAfter === 'string' ? retryAfter : undefined,
          headers: { ...res.headers },
          body: parsed,
          elapsedMs: performance.now() - started,
        });
      });
      res.on('error', reject);
    },
  );
  req.on('error', reject);
  req.end(raw);
}

/**
 * The worker's whole program, as CommonJS source: a Worker cannot load this TypeScript file under the
 * test runner (store-worker-tsx.mjs explains why), and the sender is small enough to pass as text.
 */
const WORKER_SOURCE = `
const { parentPort, workerData } = require('node:worker_threads');
const { request } = require('node:http');
const { performance } = require('node:perf_hooks');
const { url, raw, count, localAddress } = workerData;
const one = () => new Promise((resolve) => {
  const started = performance.now();
  const req = request(url, {
    method: 'POST', agent: false, localAddress,
    headers: { 'Content-Type': 'application/json', 'Content-Length': String(Buffer.byteLength(raw)) },
  }, (res) => {
    const chunks = [];
    res.on('data', (chunk) => chunks.push(chunk));
    res.on('end', () => resolve({
      status: res.statusCode, headers: { ...res.headers }, text: Buffer.concat(chunks).toString('utf8'),
      elapsedMs: performance.now() - started,
    }));
    res.on('error', (error) => resolve({ error: error.code || error.message }));
  });
  req.on('error', (error) => resolve({ error: error.code || error.message }));
  req.end(raw);
});
Promise.all(Array.from({ length: count }, one)).then((answers) => parentPort.postMessage(answers));
`;

interface WorkerAnswer {
  readonly status?: number;
  readonly headers?: Record<string, string | string[] | undefined>;
  readonly text?: string;
  readonly elapsedMs?: number;
  readonly error?: string;
}

/**
 * `count` callers at once, sent from a worker thread with its own event loop, so they reach the
 * service together as separate programs' calls would; resolves with every answer in call order.
 * A call that got no HTTP answer at all (a reset) fails the whole batch.
 */
export function callAtOnce(count: number, url: string, body: unknown, localAddress = '127.0.0.1'): Promise<CallerAnswer[]> {
  const worker = new Worker(WORKER_SOURCE, {
    eval: true,
    workerData: { url, raw: JSON.stringify(body), count, localAddress },
  });
  return new Promise((resolve, reject) => {
    worker.once('error', reject);
    worker.once('message', (answers: WorkerAnswer[]) => {
      void worker.terminate();
      const failed = answers.find((answer) => answer.error !== undefined);
      if (failed !== undefined) {
        reject(new Error(`a caller got no answer: ${String(failed.error)}`));
        return;
      }
      resolve(answers.map(toCallerAnswer));
    });
  });
}

function toCallerAnswer(answer: WorkerAnswer): CallerAnswer {
  const headers = answer.headers ?? {};
  const retryAfter = headers['retry-after'];
  let body: unknown;
  try {
    body = JSON.parse(answer.text ?? '') as unknown;
  } catch {
    body = undefined;
  }
  return {
    status: answer.status ?? 0,
    retryAfter: typeof retryAfter === 'string' ? retryAfter : undefined,
    headers,
    body,
    elapsedMs: answer.elapsedMs ?? Number.NaN,
  };
}
