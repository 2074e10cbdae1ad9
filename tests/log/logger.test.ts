import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import {
  createLogger,
  logInternalError,
  logRequestSummary,
  type FeedbackItemSummary,
  type HookCallSummary,
} from '../../src/log/logger.js';
import { createRefusalLimiter } from '../../src/log/refusal-limiter.js';
import { createMemoryLog } from './memory-log.js';

// Invented demo values (Larkspur Bay General Hospital); none is a real person or token.
const TOKEN = 'lbgh-demo-access-token-7f3a9c';
const PATIENT_ID = 'lbgh-pt-000417';
// Stands for the sha256 of a policy file's bytes; the logger passes it through unchanged.
const POLICY_HASH = createHash('sha256').update('id: lb-o2\nversion: 1.0.0\n').digest('hex');

const hookCall: HookCallSummary = {
  kind: 'hook-call',
  serviceId: 'oxygen-order-sign',
  hook: 'order-sign',
  hookInstance: 'd1577c69-dfbe-44ad-ba6d-3e05e953b2ea',
  ruleIds: ['target-range-hypercapnic-risk'],
  policyId: 'based-on-bts-2017',
  policyVersion: '1.0.0',
  policyContentHash: POLICY_HASH,
  cardCount: 1,
  fhirFallback: { used: true, keysFetched: ['observations'], keysFailed: [], keysIncomplete: [] },
  missingKeys: ['encounter'],
  cardProblems: [],
  unavailableKeys: [],
};

describe('createLogger', () => {
  it('blanks authorization and cookie headers on a logged request', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    logger.info({
      req: { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, cookie: 'sid=lbgh-session' } },
    });
    expect(log.lines()[0]?.['req']).toStrictEqual({
      method: 'POST',
      headers: { authorization: '[Redacted]', cookie: '[Redacted]' },
    });
    expect(log.text()).not.toContain(TOKEN);
    expect(log.text()).not.toContain('lbgh-session');
  });

  it('blanks fhirAuthorization, access_token, patientId, context and prefetch wherever they sit', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    logger.info({
      body: {
        fhirAuthorization: { access_token: TOKEN, token_type: 'Bearer' },
        context: { patientId: PATIENT_ID },
        prefetch: { patient: { resourceType: 'Patient', id: PATIENT_ID } },
      },
      access_token: TOKEN,
      patientId: PATIENT_ID,
      nested: { deeper: { access_token: TOKEN, patientId: PATIENT_ID } },
    });
    expect(log.text()).not.toContain(TOKEN);
    expect(log.text()).not.toContain(PATIENT_ID);
    expect(log.lines()[0]?.['body']).toStrictEqual({
      fhirAuthorization: '[Redacted]',
      context: '[Redacted]',
      prefetch: '[Redacted]',
    });
  });
});

describe('createLogger redaction of FHIR resources', () => {
  it('blanks names, identifiers, birth dates and subjects of a resource logged by mistake', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    const patient = {
      resourceType: 'Patient',
      id: PATIENT_ID,
      identifier: [{ system: 'urn:larkspur-bay:mrn', value: 'LB-MRN-880417' }],
      name: [{ family: 'Harrowgate', given: ['Edwin'] }],
      birthDate: '1951-09-30',
    };
    const observation = { resourceType: 'Observation', subject: { reference: `Patient/${PATIENT_ID}` } };
    logger.info({ patient, nested: { observation }, ...patient });
    for (const secret of ['LB-MRN-880417', 'Harrowgate', 'Edwin', '1951-09-30', PATIENT_ID]) {
      expect(log.text()).not.toContain(secret);
    }
    expect(log.lines()[0]?.['patient']).toStrictEqual({
      resourceType: 'Patient',
      id: '[Redacted]', // a Patient's id is the patient id
      identifier: '[Redacted]',
      name: '[Redacted]',
      birthDate: '[Redacted]',
    });
  });
});

describe('logRequestSummary', () => {
  it('writes one line with the decision-level fields of a hook call', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    logRequestSummary(logger, {
      requestId: 'req-1',
      method: 'POST',
      route: 'service',
      status: 200,
      durationMs: 12.345,
      errorCode: undefined,
      detail: hookCall,
    });
    const lines = log.lines();
    expect(lines).toHaveLength(1);
    const { time, ...line } = lines[0] ?? {};
    expect(typeof time).toBe('number');
    expect(line).toStrictEqual({
      level: 30,
      service: 'oxygen-order-checker',
      requestId: 'req-1',
      method: 'POST',
      route: 'service',
      status: 200,
      durationMs: 12.3,
      serviceId: 'oxygen-order-sign',
      hook: 'order-sign',
      hookInstance: 'd1577c69-dfbe-44ad-ba6d-3e05e953b2ea',
      ruleIds: ['target-range-hypercapnic-risk'],
      policyId: 'based-on-bts-2017',
      policyVersion: '1.0.0',
      policyContentHash: POLICY_HASH,
      cardCount: 1,
      fhirFallback: { used: true, keysFetched: ['observations'], keysFailed: [], keysIncomplete: [] },
      missingKeys: ['encounter'],
      msg: 'hook call',
    });
  });

  it('drops fields the summary types do not name, even when an object carries them', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    const smuggled = { ...hookCall, patientId: PATIENT_ID, token: TOKEN, name: 'Ada Quillfeather' };
    logRequestSummary(logger, {
      requestId: 'req-2',
      method: 'POST',
      route: 'service',
      status: 200,
      durationMs: 1,
      errorCode: undefined,
      detail: smuggled,
    });
    expect(log.text()).not.toContain(PATIENT_ID);
    expect(log.text()).not.toContain(TOKEN);
    expect(log.text()).not.toContain('Quillfeather');
  });

  it('logs feedback as card, rule, client, outcome and override reason code only', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    logRequestSummary(logger, {
      requestId: 'req-3',
      method: 'POST',
      route: 'feedback',
      status: 200,
      durationMs: 1,
      errorCode: undefined,
      detail: {
        kind: 'feedback',
        serviceId: 'oxygen-order-sign',
        clientIss: 'https://ehr.larkspur-bay.example',
        policyContentHash: POLICY_HASH,
        items: [
          {
            cardUuid: '0a7c0cf8-4f5c-5c7e-9d51-6f1e0b3c2a11',
            ruleId: 'spo2-above-target',
            knownCard: true,
            outcome: 'overridden',
            overrideReasonCode: 'patient-specific-target',
            duplicate: false,
            userComment: 'Mr Quillfeather prefers the mask',
          } as FeedbackItemSummary,
          {
            cardUuid: '5e2d9b61-8a3f-5b27-a0c4-91d2e6f7a8b3',
            ruleId: undefined,
            knownCard: false,
            outcome: 'accepted',
            overrideReasonCode: undefined,
            duplicate: true,
          },
        ],
      },
    });
    expect(log.lines()[0]?.['clientIss']).toBe('https://ehr.larkspur-bay.example');
    expect(log.lines()[0]?.['policyContentHash']).toBe(POLICY_HASH);
    expect(log.lines()[0]?.['feedback']).toStrictEqual([
      {
        cardUuid: '0a7c0cf8-4f5c-5c7e-9d51-6f1e0b3c2a11',
        ruleId: 'spo2-above-target',
        knownCard: true,
        outcome: 'overridden',
        overrideReasonCode: 'patient-specific-target',
        duplicate: false,
      },
      { cardUuid: '5e2d9b61-8a3f-5b27-a0c4-91d2e6f7a8b3', knownCard: false, outcome: 'accepted', duplicate: true },
    ]);
    expect(log.text()).not.toContain('Quillfeather');
  });

  describe('edge cases', () => {
    it('logs a hook call with card-building slips at warn level, listing them', () => {
      const log = createMemoryLog();
      const logger = createLogger({ level: 'info', destination: log.stream });
      const slip = "template 'low-spo2' names {{spo2}} but the finding has no value for it";
      logRequestSummary(logger, {
        requestId: 'req-7',
        method: 'POST',
        route: 'service',
        status: 200,
        durationMs: 1,
        errorCode: undefined,
        detail: { ...hookCall, cardProblems: [slip] },
      });
      expect(log.lines()[0]).toMatchObject({ level: 40, cardProblems: [slip] });
    });

    it('logs a 5xx summary at error level with its code', () => {
      const log = createMemoryLog();
      const logger = createLogger({ level: 'info', destination: log.stream });
      logRequestSummary(logger, {
        requestId: 'req-4',
        method: 'GET',
        route: 'discovery',
        status: 500,
        durationMs: 1,
        errorCode: 'CDS_ERR_INTERNAL',
        detail: undefined,
      });
      expect(log.lines()[0]).toMatchObject({ level: 50, errorCode: 'CDS_ERR_INTERNAL', msg: 'request' });
    });

    it('logs an internal error by type and stack frames, without its message', () => {
      const log = createMemoryLog();
      const logger = createLogger({ level: 'info', destination: log.stream });
      logInternalError(logger, 'req-5', new TypeError(`cannot read ${PATIENT_ID} with ${TOKEN}`));
      const line = log.lines()[0] ?? {};
      expect(line['errorType']).toBe('TypeError');
      expect(Array.isArray(line['frames'])).toBe(true);
      expect((line['frames'] as string[]).length).toBeGreaterThan(0);
      expect(log.text()).not.toContain(PATIENT_ID);
      expect(log.text()).not.toContain(TOKEN);
    });

    it('writes nothing below its level', () => {
      const log = createMemoryLog();
      const logger = createLogger({ level: 'warn', destination: log.stream });
      logRequestSummary(logger, {
        requestId: 'req-6',
        method: 'GET',
        route: 'healthz',
        status: 200,
        durationMs: 1,
        errorCode: undefined,
        detail: undefined,
      });
      expect(log.text()).toBe('');
    });
  });
});

describe('caller-controlled text in the summary line', () => {
  it('is capped, whatever field of the detail it arrives in', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    const long = 'q'.repeat(100_000);
    logRequestSummary(logger, {
      requestId: 'req-1', method: 'POST', route: 'service', status: 200, durationMs: 1, errorCode: undefined,
      detail: { ...hookCall, serviceId: long, hook: long, hookInstance: long, cardProblems: Array.from({ length: 500 }, () => long) },
    });
    logRequestSummary(logger, {
      requestId: 'req-2', method: 'POST', route: 'service', status: 401, durationMs: 1, errorCode: 'CDS_ERR_AUTH_INVALID_TOKEN',
      detail: { kind: 'auth-refused', reason: 'unknown-issuer', iss: long, kid: long, jti: long, tenant: long },
    });
    const lines = log.text().split('\n').filter((line) => line !== '');
    expect(lines).toHaveLength(2);
    // A line is a few kilobytes at most, however long the caller's text (the list keeps 50 capped items).
    for (const line of lines) expect(Buffer.byteLength(line)).toBeLessThan(16_384);
    expect(log.lines()[0]?.['hookInstance']).toBe(`${'q'.repeat(200)}…[cut from 100000 chars]`);
    expect(log.lines()[1]?.['kid']).toBe(`${'q'.repeat(200)}…[cut from 100000 chars]`);
  });
});

describe('repeated refusals', () => {
  const refusal = (requestId: string) => ({
    requestId, method: 'POST', route: 'service', status: 401, durationMs: 1,
    errorCode: 'CDS_ERR_AUTH_MISSING', detail: undefined,
  });

  it('are logged N times per client per window, then summed up in one line', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    const limiter = createRefusalLimiter({ maxLinesPerWindow: 2, windowMs: 60_000, maxClients: 10 });
    for (let i = 0; i < 12; i += 1) logRequestSummary(logger, refusal(`req-${i}`), { limiter, client: '10.0.0.9', nowMs: 0 });
    expect(log.lines()).toHaveLength(2);
    logRequestSummary(logger, refusal('req-later'), { limiter, client: '10.0.0.9', nowMs: 60_000 });
    expect(log.lines().slice(2)).toMatchObject([
      { client: '10.0.0.9', refusal: 'CDS_ERR_AUTH_MISSING', refusalsNotLogged: 10 },
      { requestId: 'req-later', status: 401 },
    ]);
  });

  it('count a call shed by the overload gate (503) as a refusal, logged at warn, not error', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    const limiter = createRefusalLimiter({ maxLinesPerWindow: 2, windowMs: 60_000, maxClients: 10 });
    const shed = (requestId: string) => ({ ...refusal(requestId), status: 503, errorCode: 'CDS_ERR_OVERLOADED' });
    for (let i = 0; i < 300; i += 1) logRequestSummary(logger, shed(`req-${i}`), { limiter, client: '10.0.0.9', nowMs: 0 });
    expect(log.lines()).toMatchObject([
      { level: 40, status: 503, errorCode: 'CDS_ERR_OVERLOADED' },
      { level: 40, status: 503, errorCode: 'CDS_ERR_OVERLOADED' },
    ]);
    logRequestSummary(logger, shed('req-later'), { limiter, client: '10.0.0.9', nowMs: 60_000 });
    expect(log.lines().slice(2)).toMatchObject([
      { client: '10.0.0.9', refusal: 'CDS_ERR_OVERLOADED', refusalsNotLogged: 298 },
      { requestId: 'req-later', level: 40 },
    ]);
  });

  it('never hold back a line that is not a refusal', () => {
    const log = createMemoryLog();
    const logger = createLogger({ level: 'info', destination: log.stream });
    const limiter = createRefusalLimiter({ maxLinesPerWindow: 1, windowMs: 60_000, maxClients: 10 });
    for (const status of [200, 200, 500, 500, 503]) {
      logRequestSummary(logger, { ...refusal('req'), status }, { limiter, client: '10.0.0.9', nowMs: 0 });
    }
    expect(log.lines()).toHaveLength(5);
  });
});
