import type { ErrorRequestHandler, RequestHandler } from 'express';
import { logInternalError, type Logger } from '../log/logger.js';
import { AppError, errorResult, type ErrorCode } from './errors.js';
import { requestState } from './request-context.js';
import { sendResult } from './respond.js';

/**
 * body-parser's error `type`s (its README, "Errors") and the catalogue code each becomes. Anything
 * body-parser raises that is not listed is still the caller's fault, so it is a 400, never a 500.
 */
const BODY_PARSER_ERRORS: Readonly<Record<string, ErrorCode>> = {
  'entity.parse.failed': 'CDS_ERR_REQUEST_MALFORMED_JSON',
  'entity.verify.failed': 'CDS_ERR_REQUEST_MALFORMED_JSON',
  'request.aborted': 'CDS_ERR_REQUEST_MALFORMED_JSON',
  'request.size.invalid': 'CDS_ERR_REQUEST_MALFORMED_JSON',
  'entity.too.large': 'CDS_ERR_PAYLOAD_TOO_LARGE',
  'encoding.unsupported': 'CDS_ERR_UNSUPPORTED_MEDIA_TYPE',
  'charset.unsupported': 'CDS_ERR_UNSUPPORTED_MEDIA_TYPE',
};

function bodyParserCode(error: unknown): ErrorCode | undefined {
  if (error === null || typeof error !== 'object') {
    return undefined;
  }
  const { type, status } = error as { type?: unknown; status?: unknown };
  if (typeof type !== 'string') {
    return undefined;
  }
  const mapped = BODY_PARSER_ERRORS[type];
  if (mapped !== undefined) {
    return mapped;
  }
  return typeof status === 'number' && status >= 400 && status < 500
    ? 'CDS_ERR_REQUEST_MALFORMED_JSON'
    : undefined;
}

/**
 * The encodings body-parser decompresses (its README, "inflate"), named the way the issue names them.
 * Only these names are ever quoted back: any other Content-Encoding is refused before reading (415).
 */
const DECOMPRESSED_ENCODINGS: Readonly<Record<string, string>> = {
  gzip: 'gzip',
  'x-gzip': 'gzip',
  deflate: 'deflate',
  br: 'br',
  zstd: 'zstd',
};

/**
 * A body declared compressed that zlib cannot decompress: body-parser passes zlib's own error on as a
 * 400 without a `type`, which would otherwise be an unexplained 500. Returns the encoding's name.
 */
export function invalidEncodingOf(error: unknown, contentEncoding: string | undefined): string | undefined {
  if (error === null || typeof error !== 'object' || contentEncoding === undefined) {
    return undefined;
  }
  const encoding = DECOMPRESSED_ENCODINGS[contentEncoding.trim().toLowerCase()];
  const { type, status, errno } = error as { type?: unknown; status?: unknown; errno?: unknown };
  const fromZlib = typeof errno === 'number' || (typeof status === 'number' && status >= 400 && status < 500);
  return encoding !== undefined && type === undefined && fromZlib ? encoding : undefined;
}

/**
 * The router marks a path segment it cannot percent-decode as a 400 URIError: the path names
 * nothing this service has, so it is a 404 like any unknown path.
 */
function isUndecodablePath(error: unknown): boolean {
  return error instanceof URIError && (error as { status?: unknown }).status === 400;
}

/** Any error becomes a catalogue error; unknown ones become the generic 500 and are logged. */
export function toAppError(error: unknown, contentEncoding?: string): AppError | undefined {
  if (error instanceof AppError) {
    return error;
  }
  const encoding = invalidEncodingOf(error, contentEncoding);
  if (encoding !== undefined) {
    return new AppError('CDS_ERR_REQUEST_ENCODING_INVALID', {
      cause: error,
      issues: [{ path: 'Content-Encoding', message: `the body is not valid ${encoding} data` }],
    });
  }
  if (isUndecodablePath(error)) {
    return new AppError('CDS_ERR_NOT_FOUND', { cause: error });
  }
  const code = bodyParserCode(error);
  return code === undefined ? undefined : new AppError(code, { cause: error });
}

/** The one JSON error middleware: express's HTML error page never reaches a client. */
export function jsonErrorHandler(logger: Logger): ErrorRequestHandler {
  return (error: unknown, req, res, next) => {
    if (res.headersSent) {
      next(error);
      return;
    }
    const state = requestState(res);
    let appError = toAppError(error, req.headers['content-encoding']);
    if (appError === undefined) {
      logInternalError(logger, state.requestId, error);
      appError = new AppError('CDS_ERR_INTERNAL');
    }
    state.errorCode = appError.code;
    sendResult(res, errorResult(appError, state.requestId));
  };
}

/** Unknown routes, and known paths with a method they do not take. */
export const notFound: RequestHandler = () => {
  throw new AppError('CDS_ERR_NOT_FOUND');
};
