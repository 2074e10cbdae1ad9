import { CANONICAL_BASE } from '../fhir/codes.js';

/**
 * The one catalogue of errors a caller can see. `docs/errors.md` holds the same codes with how to fix
 * each; tests/http/errors.test.ts keeps the two in step. Codes are never reused for a new meaning.
 */
export const ERROR_CATALOGUE = {
  CDS_ERR_REQUEST_MALFORMED_JSON: {
    status: 400,
    message: 'The request body could not be read as JSON.',
  },
  CDS_ERR_REQUEST_INVALID: {
    status: 400,
    message: 'The request does not have the shape CDS Hooks 2.0 requires; see issues.',
  },
  CDS_ERR_REQUEST_TOO_COMPLEX: {
    status: 400,
    message: 'The request body nests too deeply, or holds too long a list or text; see issues.',
  },
  CDS_ERR_REQUEST_ENCODING_INVALID: {
    status: 400,
    message: 'The request body is not validly compressed in the Content-Encoding it declares; see issues.',
  },
  CDS_ERR_HTTP_MALFORMED: {
    status: 400,
    message: 'The request is not well-formed HTTP/1.1; the connection was closed.',
  },
  CDS_ERR_HOOK_NOT_SUPPORTED: {
    status: 400,
    message: 'This CDS service is not registered for that hook.',
  },
  CDS_ERR_REVIEW_FILTER_INVALID: {
    status: 400,
    message: 'A review filter or paging parameter is not valid; see issues.',
  },
  CDS_ERR_AUTH_MISSING: {
    status: 401,
    message: 'Authentication is required.',
  },
  CDS_ERR_AUTH_INVALID_TOKEN: {
    status: 401,
    message: 'The credentials were not accepted.',
  },
  CDS_ERR_REVIEW_ACCESS_DENIED: {
    status: 403,
    message: 'Open the review pages through the hospital sign-in, or with a current link from the advisory card.',
  },
  CDS_ERR_POLICY_ACCESS_DENIED: {
    status: 403,
    message: 'Read the policy in force through the hospital sign-in.',
  },
  CDS_ERR_SERVICE_NOT_FOUND: {
    status: 404,
    message: 'No CDS service has that id; GET /cds-services lists them.',
  },
  CDS_ERR_NOT_FOUND: {
    status: 404,
    message: 'There is nothing at this path for this method.',
  },
  CDS_ERR_ADVISORY_NOT_FOUND: {
    status: 404,
    message: 'No advisory with that card uuid is on record.',
  },
  CDS_ERR_REQUEST_TIMEOUT: {
    status: 408,
    message: 'The request did not arrive in full within the time this service allows; the connection was closed.',
  },
  CDS_ERR_PREFETCH_UNAVAILABLE: {
    status: 412,
    message: 'Required FHIR data was neither prefetched nor obtainable from the FHIR server.',
  },
  CDS_ERR_PAYLOAD_TOO_LARGE: {
    status: 413,
    message: 'The request body is larger than this service accepts.',
  },
  CDS_ERR_FEEDBACK_TOO_MANY_ITEMS: {
    status: 413,
    message: 'The feedback request holds more items than this service takes in one request; see issues.',
  },
  CDS_ERR_UNSUPPORTED_MEDIA_TYPE: {
    status: 415,
    message: 'Send the request body as JSON (Content-Type: application/json, UTF-8).',
  },
  CDS_ERR_FEEDBACK_QUOTA_EXCEEDED: {
    status: 429,
    message: 'This client has sent as much feedback today as this service keeps for it; nothing was recorded. Retry after the Retry-After delay.',
  },
  CDS_ERR_AUTH_TOO_MANY_TOKENS: {
    status: 429,
    message: 'This client holds as many unexpired tokens as this service remembers for it; retry after the Retry-After delay.',
  },
  CDS_ERR_CLIENT_BUSY: {
    status: 429,
    message: 'This client has as many hook calls being checked at once as the service takes from one client; retry after the Retry-After delay.',
  },
  CDS_ERR_REQUEST_HEADERS_TOO_LARGE: {
    status: 431,
    message: 'The request headers are larger than this service accepts; the connection was closed.',
  },
  CDS_ERR_INTERNAL: {
    status: 500,
    message: 'The service failed unexpectedly; quote the request id when reporting it.',
  },
  CDS_ERR_OVERLOADED: {
    status: 503,
    message: 'The service is checking as many orders as it can at once; retry after the Retry-After delay.',
  },
  CDS_ERR_STORE_UNAVAILABLE: {
    status: 503,
    message: 'The service could not use its store, so the request was not accepted; retry later.',
  },
} as const satisfies Readonly<Record<string, { status: number; message: string }>>;

export type ErrorCode = keyof typeof ERROR_CATALOGUE;
export const ERROR_CODES = Object.keys(ERROR_CATALOGUE) as readonly ErrorCode[];

/** A problem with one field of the request, named by its dot path; the value is never echoed. */
export interface RequestIssue {
  readonly path: string;
  readonly message: string;
}

/** A prefetch key that could not be had, and why (shown to the caller in an OperationOutcome). */
export interface UnavailablePrefetch {
  readonly key: string;
  readonly reason: string;
}

export interface AppErrorOptions {
  readonly issues?: readonly RequestIssue[];
  readonly unavailable?: readonly UnavailablePrefetch[];
  readonly supportedHooks?: readonly string[];
  readonly cause?: unknown;
}

/**
 * An error the service means to report. Its message is the catalogue's fixed text, so nothing a
 * caller sent (and no token) can reach a response or a log line through it; detail for the operator
 * stays in `cause`, which is never serialised to the client.
 */
export class AppError extends Error {
  readonly code: ErrorCode;
  readonly status: number;
  readonly issues: readonly RequestIssue[] | undefined;
  readonly unavailable: readonly UnavailablePrefetch[] | undefined;
  readonly supportedHooks: readonly string[] | undefined;

  constructor(code: ErrorCode, options: AppErrorOptions = {}) {
    super(ERROR_CATALOGUE[code].message, options.cause === undefined ? {} : { cause: options.cause });
    this.name = 'AppError';
    this.code = code;
    this.status = ERROR_CATALOGUE[code].status;
    this.issues = options.issues;
    this.unavailable = options.unavailable;
    this.supportedHooks = options.supportedHooks;
  }
}

/** What one writer sends: a status, headers and a JSON body. */
export interface HttpResult {
  readonly status: number;
  readonly headers?: Readonly<Record<string, string>>;
  readonly body: unknown;
}

/** Our own code system, so an OperationOutcome names the catalogue code it stands for. */
export const ERROR_CODE_SYSTEM = `${CANONICAL_BASE}/CodeSystem/error-code`;

/**
 * 412 as a FHIR R4 OperationOutcome, as the CDS Hooks 3.0 ballot recommends for non-2xx bodies
 * (harmless under 2.0): one issue per missing key, severity `error`, code `processing`.
 */
function operationOutcomeFor(error: AppError): Record<string, unknown> {
  const unavailable = error.unavailable ?? [];
  return {
    resourceType: 'OperationOutcome',
    issue: unavailable.map((item) => ({
      severity: 'error',
      code: 'processing',
      details: {
        coding: [{ system: ERROR_CODE_SYSTEM, code: error.code }],
        text: ERROR_CATALOGUE[error.code].message,
      },
      diagnostics: `Prefetch key '${item.key}': ${item.reason}`,
    })),
  };
}

/**
 * RFC 6750 §3: with no credentials at all the challenge carries no error code; with bad ones,
 * `error="invalid_token"`. The description stays generic on purpose (best practices: 401, no detail).
 */
const CHALLENGES: Partial<Record<ErrorCode, string>> = {
  CDS_ERR_AUTH_MISSING: 'Bearer realm="cds-services"',
  CDS_ERR_AUTH_INVALID_TOKEN: 'Bearer realm="cds-services", error="invalid_token"',
};

/** Turns an AppError into the response the client sees. `requestId` appears only on 500. */
export function errorResult(error: AppError, requestId: string): HttpResult {
  const challenge = CHALLENGES[error.code];
  const headers = challenge === undefined ? undefined : { 'WWW-Authenticate': challenge };
  if (error.code === 'CDS_ERR_PREFETCH_UNAVAILABLE') {
    return {
      status: error.status,
      headers: { 'Content-Type': 'application/fhir+json; charset=utf-8' },
      body: operationOutcomeFor(error),
    };
  }
  const body: Record<string, unknown> = { code: error.code, message: error.message };
  if (error.issues !== undefined) {
    body['issues'] = error.issues.map((issue) => ({ path: issue.path, message: issue.message }));
  }
  if (error.supportedHooks !== undefined) {
    body['supportedHooks'] = [...error.supportedHooks];
  }
  if (error.code === 'CDS_ERR_INTERNAL') {
    body['requestId'] = requestId;
  }
  return headers === undefined
    ? { status: error.status, body }
    : { status: error.status, headers, body };
}
