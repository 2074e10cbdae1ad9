import { request as httpRequest, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Express } from 'express';

/**
 * One loopback http.Server for a whole test file, called through node:http's global agent (which
 * keeps connections alive), so thousands of calls do not each pay for a new server and connection.
 */

export interface AppServer {
  readonly url: string;
  close(): Promise<void>;
}

export async function listenApp(app: Express): Promise<AppServer> {
  const server: Server = await new Promise((resolve) => {
    const listening = app.listen(0, '127.0.0.1', () => resolve(listening));
  });
  const { port } = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${port}`,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

export interface Answer {
  readonly status: number;
  readonly headers: Headers;
  readonly text: string;
  /** The body parsed as JSON, or undefined when it is not JSON. */
  readonly body: unknown;
}

function parseOrUndefined(text: string): unknown {
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return undefined;
  }
}

/** POSTs `body` (a value sent as JSON, or raw text/bytes as given) and reads the whole answer. */
export async function post(
  url: string,
  body: unknown,
  headers: Readonly<Record<string, string>> = { 'Content-Type': 'application/json' },
): Promise<Answer> {
  const raw = typeof body === 'string' || body instanceof Uint8Array ? body : JSON.stringify(body);
  return send(url, 'POST', headers, raw);
}

export async function get(url: string): Promise<Answer> {
  const response = await fetch(url);
  const text = await response.text();
  return { status: response.status, headers: response.headers, text, body: parseOrUndefined(text) };
}

/**
 * Any method with any body, over node:http: fetch refuses a GET with a body, which a hostile
 * client may still send.
 */
export function send(
  url: string,
  method: string,
  headers: Readonly<Record<string, string>>,
  body: string | Uint8Array,
): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const req = httpRequest(url, { method, headers: { ...headers, 'Content-Length': String(Buffer.byteLength(body)) } }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => {
        const text = Buffer.concat(chunks).toString('utf8');
        const responseHeaders = new Headers();
        for (const [name, value] of Object.entries(res.headers)) {
          if (typeof value === 'string') responseHeaders.set(name, value);
        }
        resolve({ status: res.statusCode ?? 0, headers: responseHeaders, text, body: parseOrUndefined(text) });
      });
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end(body);
  });
}
