import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';

/**
 * A JWK Set server on 127.0.0.1 and a random port, recording every request, whose answer a test can
 * change between calls (key rotation, redirects, oversized or slow answers). Loopback only.
 */
export interface JwksReply {
  readonly status: number;
  readonly body?: string;
  readonly headers?: Readonly<Record<string, string>>;
  /** Never answer (the client's timeout must end it). */
  readonly hang?: boolean;
}

export interface JwksServer {
  readonly origin: string;
  /** `${origin}/jwks.json` */
  readonly url: string;
  /** Paths requested, in order. */
  readonly hits: string[];
  setKeys(keys: readonly unknown[]): void;
  setReply(reply: (path: string) => JwksReply): void;
  close(): Promise<void>;
}

export async function startJwksServer(keys: readonly unknown[] = []): Promise<JwksServer> {
  const hits: string[] = [];
  let current: (path: string) => JwksReply = () => ({ status: 200, body: JSON.stringify({ keys }) });
  const server: Server = createServer((req, res) => {
    const path = req.url ?? '';
    hits.push(path);
    const reply = current(path);
    if (reply.hang === true) {
      return;
    }
    res.writeHead(reply.status, { 'Content-Type': 'application/json', ...reply.headers });
    res.end(reply.body ?? '');
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return {
    origin,
    url: `${origin}/jwks.json`,
    hits,
    setKeys(next) {
      current = () => ({ status: 200, body: JSON.stringify({ keys: next }) });
    },
    setReply(reply) {
      current = reply;
    },
    close: () =>
      new Promise<void>((resolve, reject) => {
        server.closeAllConnections();
        server.close((error) => (error === undefined ? resolve() : reject(error)));
      }),
  };
}
