import { createServer, type IncomingHttpHeaders, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';

/** A request the test FHIR server received. */
export interface ReceivedRequest {
  readonly method: string;
  /** Path and query as sent, e.g. `/fhir/Patient/lbgh-pt-000417`. */
  readonly url: string;
  readonly headers: IncomingHttpHeaders;
}

export interface Reply {
  readonly status: number;
  readonly body?: unknown;
  readonly rawBody?: string;
  readonly headers?: Readonly<Record<string, string>>;
  /** Hold the answer back this long (for the timeout case). */
  readonly delayMs?: number;
}

export interface FhirTestServer {
  /** e.g. `http://127.0.0.1:41234/fhir` */
  readonly baseUrl: string;
  readonly origin: string;
  readonly requests: ReceivedRequest[];
  close(): Promise<void>;
}

/**
 * A tiny FHIR server on 127.0.0.1 and a random port, answering from `reply`. Loopback only: tests
 * never reach another host.
 */
export async function startFhirServer(
  reply: (request: ReceivedRequest, origin: string) => Reply,
): Promise<FhirTestServer> {
  const requests: ReceivedRequest[] = [];
  const timers = new Set<NodeJS.Timeout>();
  let origin = '';
  const server: Server = createServer((req, res) => {
    const received = { method: req.method ?? '', url: req.url ?? '', headers: req.headers };
    requests.push(received);
    const answer = reply(received, origin);
    const send = (): void => {
      const text = answer.rawBody ?? (answer.body === undefined ? '' : JSON.stringify(answer.body));
      res.writeHead(answer.status, { 'Content-Type': 'application/fhir+json', ...answer.headers });
      res.end(text);
    };
    if (answer.delayMs === undefined) {
      send();
    } else {
      const timer = setTimeout(() => {
        timers.delete(timer);
        if (!res.destroyed) send();
      }, answer.delayMs);
      timers.add(timer);
    }
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return {
    baseUrl: `${origin}/fhir`,
    origin,
    requests,
    close: () =>
      new Promise<void>((resolve, reject) => {
        for (const timer of timers) clearTimeout(timer);
        server.closeAllConnections();
        server.close((error) => (error === undefined ? resolve() : reject(error)));
      }),
  };
}
