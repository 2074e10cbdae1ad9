import type { Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { ERROR_CATALOGUE, type ErrorCode } from './errors.js';
import { securityHeaderValues, type SecurityHeaderOptions } from './security-headers.js';

/**
 * What Node's HTTP parser refuses before express sees the request (headers too large, a request
 * that did not arrive in time, bytes that are not HTTP) still gets a catalogue error in JSON with the
 * security headers, not Node's bare status line. The connection is closed after it: the parser's
 * state is unknown, so nothing more may be read from it (RFC 9112 §9.6).
 */

/** Node's parser error codes (node/lib/_http_server.js, llhttp) and the catalogue code each becomes. */
export function clientErrorCode(nodeCode: string | undefined): ErrorCode {
  if (nodeCode === 'HPE_HEADER_OVERFLOW') {
    return 'CDS_ERR_REQUEST_HEADERS_TOO_LARGE';
  }
  return nodeCode === 'ERR_HTTP_REQUEST_TIMEOUT' ? 'CDS_ERR_REQUEST_TIMEOUT' : 'CDS_ERR_HTTP_MALFORMED';
}

/** The whole response as bytes: a status line, the headers and a JSON body. Pure. */
export function clientErrorResponse(code: ErrorCode, options: SecurityHeaderOptions): string {
  const { status, message } = ERROR_CATALOGUE[code];
  const body = JSON.stringify({ code, message });
  const reason: Readonly<Record<number, string>> = {
    400: 'Bad Request',
    408: 'Request Timeout',
    431: 'Request Header Fields Too Large',
  };
  const headers: Record<string, string> = {
    'Content-Type': 'application/json; charset=utf-8',
    'Content-Length': String(Buffer.byteLength(body)),
    Connection: 'close',
    ...securityHeaderValues(options),
  };
  const lines = Object.entries(headers).map(([name, value]) => `${name}: ${value}`);
  return `HTTP/1.1 ${status} ${reason[status] ?? 'Bad Request'}\r\n${lines.join('\r\n')}\r\n\r\n${body}`;
}

export interface ClientErrorEvent {
  readonly code: ErrorCode;
  /** Node's error code (e.g. HPE_HEADER_OVERFLOW), never the error's message, which may quote input. */
  readonly nodeCode: string;
  readonly remoteAddress: string | undefined;
  /** false when nothing could be written (socket gone, or a response was already under way). */
  readonly answered: boolean;
}

/** Replaces Node's default 'clientError' answer on `server`; `onRefusal` hears of each (for the log). */
export function answerClientErrors(
  server: Server,
  options: SecurityHeaderOptions,
  onRefusal: (event: ClientErrorEvent) => void = () => undefined,
): void {
  server.on('clientError', (error: NodeJS.ErrnoException, socket: Duplex) => {
    const nodeCode = typeof error.code === 'string' ? error.code : 'unknown';
    const code = clientErrorCode(error.code);
    // A response already started on this socket cannot be followed by another; a reset peer hears nothing.
    const started = (socket as { _httpMessage?: { headersSent?: boolean } })._httpMessage?.headersSent === true;
    const answered = nodeCode !== 'ECONNRESET' && socket.writable && !started;
    if (answered) {
      // Ended, then destroyed once written; a peer that never reads is cut after a second regardless.
      const cut = setTimeout(() => socket.destroy(), 1000);
      cut.unref();
      socket.end(clientErrorResponse(code, options), () => {
        clearTimeout(cut);
        socket.destroy();
      });
    } else {
      socket.destroy();
    }
    onRefusal({
      code,
      nodeCode,
      remoteAddress: (socket as { remoteAddress?: string }).remoteAddress,
      answered,
    });
  });
}
