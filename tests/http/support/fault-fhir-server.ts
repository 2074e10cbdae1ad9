import { createServer, type IncomingHttpHeaders, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo, Socket } from 'node:net';
import { copd, encounter, patient, paco2, ph, respRate, searchset, spo2 } from '../larkspur-fixtures.js';

/**
 * A FHIR server on 127.0.0.1 (random port) that misbehaves on purpose, for the robustness tests. Each
 * base URL names one fault and the resource type that suffers it; every other read or search under
 * that base answers normally with the invented Larkspur Bay data, so one hook call meets exactly one
 * fault. Base URL shape: `{origin}/f/{fault}/{resourceType}/{first|next-page}/fhir`.
 */

export const FAULTS = [
  'slow', // answers, but only after `slowMs`, longer than any per-call timeout the tests set
  'hang', // never answers
  'status-500',
  'status-401',
  'junk-json', // 200 with a body that is not JSON
  'not-fhir-json', // 200 with JSON that is no FHIR resource
  'wrong-type', // 200 with a resource of another type (a Patient for an Observation search)
  'next-self', // a searchset whose next link points back at itself
  'next-new', // a searchset whose next link is always a new page
  'huge-body', // 50 MB streamed without Content-Length
  'huge-declared', // 50 MB announced in Content-Length
  'redirect-other-host', // 302 to a server on another host (127.0.0.2)
  'reset-mid-body', // headers and part of the body, then a TCP reset
  'deep-json', // valid JSON nested 100,000 levels deep
  'held', // answers normally, but only once the test calls releaseHeld()
] as const;
export type Fault = (typeof FAULTS)[number];

/** Where the fault strikes: the first answer for the type, or only the page after it. */
export type FaultOn = 'first' | 'next-page';

export const HUGE_BODY_BYTES = 50 * 1024 * 1024;
const CHUNK = Buffer.alloc(64 * 1024, 0x20); // spaces: valid JSON whitespace, so only the size is at fault

export interface Received {
  readonly url: string;
  readonly headers: IncomingHttpHeaders;
}

export interface FaultFhirServer {
  readonly origin: string;
  baseUrl(fault: Fault, resourceType: string, on?: FaultOn): string;
  /** Every request the main server received. */
  readonly requests: Received[];
  /** Every request the redirect target on 127.0.0.2 received (there should be none). */
  readonly redirectTargetRequests: Received[];
  /** Body bytes the huge-body answers got onto the wire before the client hung up. */
  readonly hugeBytesSent: () => number;
  /** Answers every request held by the `held` fault so far. */
  releaseHeld(): void;
  close(): Promise<void>;
}

/** The fixtures' patient id, rewritten to whoever the request asks about. */
const FIXTURE_PATIENT = 'lb-pt-0417';

function patientAsked(url: URL): string | undefined {
  const fromQuery = url.searchParams.get('patient');
  const fromRead = /\/fhir\/Patient\/([A-Za-z0-9\-.]{1,64})$/.exec(url.pathname)?.[1];
  return fromQuery ?? fromRead ?? undefined;
}

/** The Larkspur Bay fixtures for `type`, about the patient the request names. */
function normalAnswer(type: string, url?: URL): unknown {
  const patientId = url === undefined ? undefined : patientAsked(url);
  const answer = fixtureFor(type);
  return patientId === undefined || patientId === FIXTURE_PATIENT
    ? answer
    : (JSON.parse(JSON.stringify(answer).replaceAll(FIXTURE_PATIENT, patientId)) as unknown);
}

function fixtureFor(type: string): unknown {
  switch (type) {
    case 'Patient':
      return patient;
    case 'Encounter':
      return encounter;
    case 'Observation':
      return searchset([spo2, respRate, paco2, ph]);
    case 'Condition':
      return searchset([copd]);
    default:
      return searchset([]);
  }
}

function sendJson(res: ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}): void {
  res.writeHead(status, { 'Content-Type': 'application/fhir+json', ...headers });
  res.end(typeof body === 'string' ? body : JSON.stringify(body));
}

/** Writes `total` bytes honouring back-pressure, stopping as soon as the client goes away. */
function streamHuge(res: ServerResponse, total: number, onSent: (bytes: number) => void): void {
  let sent = 0;
  const head = Buffer.from('{"resourceType":"Bundle","type":"searchset","entry":[');
  const pump = (): void => {
    while (sent < total && !res.destroyed) {
      const chunk = sent === 0 ? head : CHUNK;
      sent += chunk.length;
      onSent(chunk.length);
      if (!res.write(chunk)) {
        res.once('drain', pump);
        return;
      }
    }
    if (!res.destroyed) res.end(']}');
  };
  pump();
}

export async function startFaultFhirServer(options: { readonly slowMs: number }): Promise<FaultFhirServer> {
  const requests: Received[] = [];
  const redirectTargetRequests: Received[] = [];
  const timers = new Set<NodeJS.Timeout>();
  const sockets = new Set<Socket>();
  let hugeBytes = 0;
  const held: (() => void)[] = [];
  let origin = '';

  const other: Server = createServer((req, res) => {
    redirectTargetRequests.push({ url: req.url ?? '', headers: req.headers });
    sendJson(res, 200, searchset([]));
  });
  await new Promise<void>((resolve) => other.listen(0, '127.0.0.2', resolve));
  const otherOrigin = `http://127.0.0.2:${(other.address() as AddressInfo).port}`;

  const server: Server = createServer((req, res) => {
    const url = new URL(req.url ?? '/', 'http://fault.invalid');
    requests.push({ url: req.url ?? '', headers: req.headers });
    const match = /^\/f\/([a-z0-9-]+)\/([A-Za-z]+)\/(first|next-page)\/fhir\/([A-Za-z]+)/.exec(url.pathname);
    if (match === null) {
      sendJson(res, 404, { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'not-found' }] });
      return;
    }
    const [, fault = '', target = '', on = 'first', type = ''] = match;
    const page = Number(url.searchParams.get('_page') ?? '1');
    const selfUrl = `${origin}${url.pathname}${url.search}`;
    if (type !== target) {
      sendJson(res, 200, normalAnswer(type, url));
      return;
    }
    if (on === 'next-page' && page === 1) {
      const base = normalAnswer(type, url) as { entry?: unknown[] };
      sendJson(res, 200, { ...base, link: [{ relation: 'next', url: `${origin}${url.pathname}?_page=2` }] });
      return;
    }
    switch (fault as Fault) {
      case 'slow': {
        const timer = setTimeout(() => {
          timers.delete(timer);
          if (!res.destroyed) sendJson(res, 200, normalAnswer(type, url));
        }, options.slowMs);
        timers.add(timer);
        return;
      }
      case 'hang':
        return;
      case 'held':
        held.push(() => {
          if (!res.destroyed) sendJson(res, 200, normalAnswer(type, url));
        });
        return;
      case 'status-500':
        sendJson(res, 500, { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'exception' }] });
        return;
      case 'status-401':
        sendJson(res, 401, { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'login' }] }, {
          'WWW-Authenticate': 'Bearer error="invalid_token"',
        });
        return;
      case 'junk-json':
        sendJson(res, 200, '{"resourceType": "Bundle", "entry": [ {"resource": <html>gateway error</html>');
        return;
      case 'not-fhir-json':
        sendJson(res, 200, { status: 'ok', results: [1, 2, 3] });
        return;
      case 'wrong-type':
        sendJson(res, 200, type === 'Patient' ? spo2 : patient);
        return;
      case 'next-self':
        sendJson(res, 200, searchset([spo2], [{ relation: 'next', url: selfUrl }]));
        return;
      case 'next-new': {
        const next = `${origin}${url.pathname}?_page=${page + 1}`;
        sendJson(res, 200, searchset([respRate], [{ relation: 'next', url: next }]));
        return;
      }
      case 'huge-body':
        res.writeHead(200, { 'Content-Type': 'application/fhir+json' });
        streamHuge(res, HUGE_BODY_BYTES, (bytes) => {
          hugeBytes += bytes;
        });
        return;
      case 'huge-declared':
        res.writeHead(200, { 'Content-Type': 'application/fhir+json', 'Content-Length': String(HUGE_BODY_BYTES) });
        streamHuge(res, HUGE_BODY_BYTES, (bytes) => {
          hugeBytes += bytes;
        });
        return;
      case 'redirect-other-host':
        res.writeHead(302, { Location: `${otherOrigin}/fhir${url.pathname.replace(/^.*\/fhir/, '')}${url.search}` });
        res.end();
        return;
      case 'reset-mid-body':
        res.writeHead(200, { 'Content-Type': 'application/fhir+json', 'Content-Length': '5000' });
        res.write('{"resourceType":"Bundle","type":"searchset","entry":[{"resource":');
        setImmediate(() => res.socket?.resetAndDestroy());
        return;
      case 'deep-json': {
        const depth = 100_000;
        sendJson(res, 200, `{"resourceType":"Bundle","entry":${'['.repeat(depth)}${']'.repeat(depth)}}`);
        return;
      }
      default:
        sendJson(res, 400, { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'invalid' }] });
    }
  });
  server.on('connection', (socket: Socket) => {
    sockets.add(socket);
    socket.once('close', () => sockets.delete(socket));
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;

  const closeOne = (s: Server): Promise<void> =>
    new Promise((resolve) => {
      s.closeAllConnections();
      s.close(() => resolve());
    });
  return {
    origin,
    baseUrl: (fault, resourceType, on = 'first') => `${origin}/f/${fault}/${resourceType}/${on}/fhir`,
    requests,
    redirectTargetRequests,
    hugeBytesSent: () => hugeBytes,
    releaseHeld: () => {
      for (const answer of held.splice(0)) answer();
    },
    close: async () => {
      for (const timer of timers) clearTimeout(timer);
      for (const socket of sockets) socket.destroy();
      await Promise.all([closeOne(server), closeOne(other)]);
    },
  };
}
