import { readFileSync } from 'node:fs';
import { connect } from 'node:net';
import { gzipSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clientErrorCode, clientErrorResponse } from '../../src/http/client-error.js';
import { ERROR_CATALOGUE } from '../../src/http/errors.js';
import { createLogger } from '../../src/log/logger.js';
import { startServer, type StartedServer } from '../../src/server.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const log = createMemoryLog();
let started: StartedServer;

beforeAll(async () => {
  const result = await startServer(
    { PORT: '0', OXYGEN_CHECKER_DATA_DIR: makeTempDataDir() },
    ROOT,
    createLogger({ level: 'info', destination: log.stream }),
  );
  if (result.kind !== 'started') throw new Error(result.problems);
  started = result.started;
});

afterAll(async () => {
  await started.close();
});

/** Sends raw bytes and reads until the server closes the connection. */
function rawExchange(bytes: string | Buffer): Promise<string> {
  const { hostname, port } = new URL(started.url);
  return new Promise((resolve, reject) => {
    const socket = connect(Number(port), hostname);
    let received = '';
    socket.on('data', (chunk: Buffer) => {
      received += chunk.toString('latin1');
    });
    socket.on('close', () => resolve(received));
    socket.on('error', (error: NodeJS.ErrnoException) => (error.code === 'ECONNRESET' ? resolve(received) : reject(error)));
    socket.write(bytes);
  });
}

function parseRaw(raw: string): { status: number; headers: Map<string, string>; body: unknown } {
  const [head = '', body = ''] = raw.split('\r\n\r\n');
  const [statusLine = '', ...lines] = head.split('\r\n');
  const headers = new Map(lines.map((line) => [line.slice(0, line.indexOf(':')).toLowerCase(), line.slice(line.indexOf(':') + 1).trim()]));
  return { status: Number(statusLine.split(' ')[1]), headers, body: JSON.parse(body) as unknown };
}

// Fetch Standard, RFC 9111 §5.2.2.5, RFC 7034: the headers every response carries (src/http/security-headers.ts).
function expectSecurityHeaders(get: (name: string) => string | null | undefined): void {
  expect(get('x-content-type-options')).toBe('nosniff');
  expect(get('cache-control')).toBe('no-store');
  expect(get('x-frame-options')).toBe('DENY');
  expect(get('content-security-policy')).toContain("frame-ancestors 'none'");
}

const HOOK_BODY = JSON.stringify({ hook: 'order-sign', hookInstance: 'x', context: {} });

describe('a body that does not match its Content-Encoding', () => {
  it.each(['gzip', 'deflate', 'br'])('answers 400 naming %s when the body is not compressed', async (encoding) => {
    const response = await fetch(`${started.url}/cds-services/oxygen-order-check`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', 'Content-Encoding': encoding },
      body: HOOK_BODY,
    });
    // RFC 9110 §15.5.1: the request itself is at fault
    expect(response.status).toBe(400);
    expectSecurityHeaders((name) => response.headers.get(name));
    expect(await response.json()).toStrictEqual({
      code: 'CDS_ERR_REQUEST_ENCODING_INVALID',
      message: ERROR_CATALOGUE.CDS_ERR_REQUEST_ENCODING_INVALID.message,
      issues: [{ path: 'Content-Encoding', message: `the body is not valid ${encoding} data` }],
    });
  });

  it('answers 400 for a gzip stream cut short', async () => {
    const whole = gzipSync(Buffer.from(HOOK_BODY));
    const response = await fetch(`${started.url}/cds-services/oxygen-order-check`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', 'Content-Encoding': 'gzip' },
      body: whole.subarray(0, Math.floor(whole.length / 2)),
    });
    expect(response.status).toBe(400);
    expect(((await response.json()) as { code: string }).code).toBe('CDS_ERR_REQUEST_ENCODING_INVALID');
  });

  it('answers 415 for an encoding the service does not read, without quoting it', async () => {
    const response = await fetch(`${started.url}/cds-services/oxygen-order-check`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', 'Content-Encoding': 'compress-by-hand' },
      body: HOOK_BODY,
    });
    // RFC 9110 §15.5.16: an unsupported content coding is a 415
    expect(response.status).toBe(415);
    expectSecurityHeaders((name) => response.headers.get(name));
    const text = await response.text();
    expect(JSON.parse(text)).toMatchObject({ code: 'CDS_ERR_UNSUPPORTED_MEDIA_TYPE' });
    expect(text).not.toContain('compress-by-hand');
  });
});

describe('requests the HTTP parser refuses', () => {
  it('answers headers too large with 431 in JSON with the security headers', async () => {
    const raw = await rawExchange(
      `POST /cds-services/oxygen-order-check HTTP/1.1\r\nHost: localhost\r\nAuthorization: Bearer ${'a'.repeat(100_000)}\r\nContent-Length: 0\r\n\r\n`,
    );
    const response = parseRaw(raw);
    // RFC 6585 §5: 431 Request Header Fields Too Large
    expect(response.status).toBe(431);
    expect(response.headers.get('content-type')).toBe('application/json; charset=utf-8');
    expect(response.headers.get('connection')).toBe('close');
    expectSecurityHeaders((name) => response.headers.get(name));
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_REQUEST_HEADERS_TOO_LARGE',
      message: ERROR_CATALOGUE.CDS_ERR_REQUEST_HEADERS_TOO_LARGE.message,
    });
  });

  it.each([
    ['a request line that is not HTTP', 'HELLO THERE\r\n\r\n'],
    ['a header line without a colon', 'GET /healthz HTTP/1.1\r\nHost: localhost\r\nno colon here\r\n\r\n'],
    ['a Content-Length that is not a number', 'POST /cds-services HTTP/1.1\r\nHost: localhost\r\nContent-Length: ten\r\n\r\n'],
  ])('answers %s with 400 in JSON with the security headers', async (_what, bytes) => {
    const response = parseRaw(await rawExchange(bytes));
    // RFC 9112 §2.2 and §6.3: a malformed message is answered 400 and the connection closed
    expect(response.status).toBe(400);
    expectSecurityHeaders((name) => response.headers.get(name));
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_HTTP_MALFORMED',
      message: ERROR_CATALOGUE.CDS_ERR_HTTP_MALFORMED.message,
    });
  });
});

describe('what a hostile request can write to the log', () => {
  // A few kilobytes: the longest summary line the service writes for an ordinary call is under 2 KB.
  const LINE_MAX_BYTES = 4096;

  it('keeps every line short for a 2.5 KB gzip body, a 100 KB header and a long hook instance', async () => {
    const before = log.text().length;
    // About 2.5 KB compressed, about 2.5 MB of JSON once decompressed.
    const bomb = gzipSync(Buffer.from(JSON.stringify({ hook: 'order-sign', hookInstance: 'h'.repeat(2_500_000), context: {} })));
    expect(bomb.length).toBeLessThan(4_000);
    await fetch(`${started.url}/cds-services/oxygen-order-check`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', 'Content-Encoding': 'gzip' },
      body: bomb,
    });
    await fetch(`${started.url}/cds-services/${'s'.repeat(6_000)}`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json', 'User-Agent': 'u'.repeat(8_000) },
      body: JSON.stringify({ hook: 'x'.repeat(4_000), hookInstance: 'i'.repeat(4_000), context: {} }),
    });
    // A valid call (an invented Larkspur Bay patient) whose hookInstance is 256 characters, the most the
    // request schema takes (src/cds/schemas.ts): answered, and its summary line carries it, capped.
    const example = JSON.parse(readFileSync(new URL('../../examples/order-sign-carbon-monoxide.json', import.meta.url), 'utf8')) as Record<string, unknown>;
    const discovery = (await (await fetch(`${started.url}/cds-services`)).json()) as { services: { id: string; hook: string }[] };
    const service = discovery.services.find((entry) => entry.hook === example['hook']);
    const answered = await fetch(`${started.url}/cds-services/${service?.id ?? 'missing'}`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ ...example, hookInstance: 'i'.repeat(256) }),
    });
    expect(answered.status).toBe(200);
    await rawExchange(`GET /healthz HTTP/1.1\r\nHost: localhost\r\nAuthorization: Bearer ${'a'.repeat(100_000)}\r\n\r\n`);
    // The summary line is written when the response closes; let it land.
    await new Promise((resolve) => setTimeout(resolve, 100));
    const lines = log.text().slice(before).split('\n').filter((line) => line !== '');
    expect(lines.length).toBeGreaterThanOrEqual(3);
    for (const line of lines) expect(Buffer.byteLength(line)).toBeLessThan(LINE_MAX_BYTES);
    expect(lines.some((line) => line.includes('"nodeCode":"HPE_HEADER_OVERFLOW"'))).toBe(true);
    expect(lines.some((line) => line.includes(`"hookInstance":"${'i'.repeat(200)}…[cut from 256 chars]"`))).toBe(true);
  });
});

describe('clientErrorResponse', () => {
  it.each([
    ['HPE_HEADER_OVERFLOW', 431],
    ['ERR_HTTP_REQUEST_TIMEOUT', 408],
    ['HPE_INVALID_METHOD', 400],
    [undefined, 400],
  ] as const)('maps Node code %s to a %i with a Content-Length that matches the body', (nodeCode, status) => {
    const code = clientErrorCode(nodeCode);
    const raw = clientErrorResponse(code, { strictTransportSecurity: true });
    const parsed = parseRaw(raw);
    expect(parsed.status).toBe(status);
    expect(Number(parsed.headers.get('content-length'))).toBe(Buffer.byteLength(raw.split('\r\n\r\n')[1] ?? ''));
    // RFC 6797: HSTS is sent when the service is reached over TLS only
    expect(parsed.headers.get('strict-transport-security')).toMatch(/^max-age=\d+$/);
  });
});
