import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  AppError,
  ERROR_CATALOGUE,
  ERROR_CODES,
  errorResult,
} from '../../src/http/errors.js';

const docs = readFileSync(new URL('../../docs/errors.md', import.meta.url), 'utf8');

/** The rows of the docs table: `| \`CODE\` | status | meaning | fix |`. */
function documentedRows(): { code: string; status: number; meaning: string; fix: string }[] {
  return docs
    .split('\n')
    .filter((line) => /^\| `CDS_ERR_/.test(line))
    .map((line) => {
      const cells = line.split('|').slice(1, -1).map((cell) => cell.trim());
      return {
        code: (cells[0] ?? '').replaceAll('`', ''),
        status: Number(cells[1]),
        meaning: cells[2] ?? '',
        fix: cells[3] ?? '',
      };
    });
}

describe('error catalogue', () => {
  it('has exactly the codes docs/errors.md documents, with the same statuses', () => {
    const documented = documentedRows().map((row) => [row.code, row.status]);
    const catalogued = ERROR_CODES.map((code) => [code, ERROR_CATALOGUE[code].status]);
    expect(documented.sort()).toStrictEqual(catalogued.sort());
  });

  it('documents a meaning and a fix for every code', () => {
    for (const row of documentedRows()) {
      expect(row.meaning.length, row.code).toBeGreaterThan(20);
      expect(row.fix.length, row.code).toBeGreaterThan(10);
    }
  });

  it.each([
    // CDS Hooks 2.0 §HTTP status codes: 412 when required data cannot be obtained
    ['CDS_ERR_PREFETCH_UNAVAILABLE', 412],
    // CDS Hooks 2.0 §Trusting CDS Clients with best practices: 401, no detail
    ['CDS_ERR_AUTH_MISSING', 401],
    ['CDS_ERR_AUTH_INVALID_TOKEN', 401],
    // RFC 9110 §15.5.14 Content Too Large, §15.5.16 Unsupported Media Type
    ['CDS_ERR_PAYLOAD_TOO_LARGE', 413],
    ['CDS_ERR_UNSUPPORTED_MEDIA_TYPE', 415],
  ] as const)('gives %s the status %i', (code, status) => {
    expect(ERROR_CATALOGUE[code].status).toBe(status);
  });

  it('names codes CDS_ERR_<AREA>_<WHAT>', () => {
    for (const code of ERROR_CODES) {
      expect(code).toMatch(/^CDS_ERR_[A-Z]+(_[A-Z]+)*$/);
    }
  });
});

describe('errorResult', () => {
  it('gives the code, fixed message and issues for an invalid request', () => {
    const error = new AppError('CDS_ERR_REQUEST_INVALID', {
      issues: [{ path: 'context.patientId', message: 'Invalid input: expected string, received undefined' }],
    });
    expect(errorResult(error, 'req-1')).toStrictEqual({
      status: 400,
      body: {
        code: 'CDS_ERR_REQUEST_INVALID',
        message: 'The request does not have the shape CDS Hooks 2.0 requires; see issues.',
        issues: [{ path: 'context.patientId', message: 'Invalid input: expected string, received undefined' }],
      },
    });
  });

  it('gives a FHIR OperationOutcome for 412, one issue per missing key', () => {
    const error = new AppError('CDS_ERR_PREFETCH_UNAVAILABLE', {
      unavailable: [
        { key: 'patient', reason: 'was not prefetched' },
        { key: 'conditions', reason: 'was not prefetched' },
      ],
    });
    const details = {
      coding: [{ system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/error-code', code: 'CDS_ERR_PREFETCH_UNAVAILABLE' }],
      text: 'Required FHIR data was neither prefetched nor obtainable from the FHIR server.',
    };
    // CDS Hooks 3.0 ballot §HTTP status codes: OperationOutcome, severity error, code processing
    expect(errorResult(error, 'req-2')).toStrictEqual({
      status: 412,
      headers: { 'Content-Type': 'application/fhir+json; charset=utf-8' },
      body: {
        resourceType: 'OperationOutcome',
        issue: [
          { severity: 'error', code: 'processing', details, diagnostics: "Prefetch key 'patient': was not prefetched" },
          { severity: 'error', code: 'processing', details, diagnostics: "Prefetch key 'conditions': was not prefetched" },
        ],
      },
    });
  });

  it('challenges with Bearer and no error code when credentials are missing', () => {
    // RFC 6750 §3: no error code when the request lacks authentication information
    expect(errorResult(new AppError('CDS_ERR_AUTH_MISSING'), 'req-3')).toStrictEqual({
      status: 401,
      headers: { 'WWW-Authenticate': 'Bearer realm="cds-services"' },
      body: { code: 'CDS_ERR_AUTH_MISSING', message: 'Authentication is required.' },
    });
  });

  it('challenges with error="invalid_token" when the token is refused', () => {
    // RFC 6750 §3.1 invalid_token
    const error = new AppError('CDS_ERR_AUTH_INVALID_TOKEN', { cause: new Error('jwt expired') });
    expect(errorResult(error, 'req-4')).toStrictEqual({
      status: 401,
      headers: { 'WWW-Authenticate': 'Bearer realm="cds-services", error="invalid_token"' },
      body: { code: 'CDS_ERR_AUTH_INVALID_TOKEN', message: 'The credentials were not accepted.' },
    });
  });

  describe('edge cases', () => {
    it('puts the request id in a 500 body and nothing of the cause', () => {
      const error = new AppError('CDS_ERR_INTERNAL', { cause: new Error('secret detail') });
      expect(errorResult(error, 'req-5')).toStrictEqual({
        status: 500,
        body: {
          code: 'CDS_ERR_INTERNAL',
          message: 'The service failed unexpectedly; quote the request id when reporting it.',
          requestId: 'req-5',
        },
      });
    });

    it('keeps the cause on the error for the operator', () => {
      const cause = new Error('detail');
      expect(new AppError('CDS_ERR_AUTH_INVALID_TOKEN', { cause }).cause).toBe(cause);
    });
  });
});
