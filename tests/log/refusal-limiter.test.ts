import request from 'supertest';
import { describe, expect, it } from 'vitest';
import type { Authenticate } from '../../src/http/auth.js';
import { createRefusalLimiter, refusalClientKey, type RefusalDecision } from '../../src/log/refusal-limiter.js';
import { buildTestApp } from '../http/test-app.js';

const LIMITS = { maxLinesPerWindow: 3, windowMs: 60_000, maxClients: 4 };

function run(times: number, decide: () => RefusalDecision): RefusalDecision[] {
  return Array.from({ length: times }, decide);
}

describe('createRefusalLimiter', () => {
  it('logs the first N refusals of a client and reason in a window, then counts the rest', () => {
    const limiter = createRefusalLimiter(LIMITS);
    const decisions = run(10, () => limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000));
    expect(decisions.filter((d) => d.kind === 'log')).toHaveLength(3);
    expect(decisions.slice(3).every((d) => d.kind === 'suppress')).toBe(true);
  });

  it('reports how many were not logged with the first refusal of the next window', () => {
    const limiter = createRefusalLimiter(LIMITS);
    run(10, () => limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000));
    expect(limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 61_000)).toStrictEqual({ kind: 'log', suppressedBefore: 7 });
    // The count is reported once, then the new window starts afresh.
    expect(limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 61_001)).toStrictEqual({ kind: 'log', suppressedBefore: 0 });
  });

  it('keeps clients and reasons apart: one noisy client does not silence another', () => {
    const limiter = createRefusalLimiter(LIMITS);
    run(10, () => limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000));
    expect(limiter.decide('10.0.0.8', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000).kind).toBe('log');
    expect(limiter.decide('10.0.0.7', 'CDS_ERR_REQUEST_INVALID', 1_000).kind).toBe('log');
  });

  it('holds at most maxClients entries, reusing ended windows and sharing one entry past that', () => {
    const limiter = createRefusalLimiter(LIMITS);
    for (let i = 0; i < 50; i += 1) limiter.decide(`10.0.1.${i}`, 'CDS_ERR_NOT_FOUND', 1_000);
    expect(limiter.size()).toBeLessThanOrEqual(LIMITS.maxClients + 1);
    // The clients past the table share one entry, so together they log at most N lines a window.
    let fresh = 0;
    const overflow = run(10, () => limiter.decide(`10.0.3.${++fresh}`, 'CDS_ERR_NOT_FOUND', 1_500));
    expect(overflow.filter((d) => d.kind === 'log').length).toBeLessThanOrEqual(LIMITS.maxLinesPerWindow);
    // Once the windows end, new clients get their own entries again.
    expect(limiter.decide('10.0.2.1', 'CDS_ERR_NOT_FOUND', 200_000)).toStrictEqual({ kind: 'log', suppressedBefore: 0 });
    expect(limiter.size()).toBeLessThanOrEqual(LIMITS.maxClients + 1);
  });
});

describe('refusalClientKey', () => {
  it('counts an authenticated request against its issuer, whatever address it came from', () => {
    const viaProxy = refusalClientKey({ authenticatedIss: 'https://ehr.larkspur-bay.example', address: '10.0.0.1' });
    const direct = refusalClientKey({ authenticatedIss: 'https://ehr.larkspur-bay.example', address: '10.0.0.9' });
    expect(viaProxy).toBe(direct);
    expect(refusalClientKey({ authenticatedIss: 'https://theatres.larkspur-bay.example', address: '10.0.0.1' })).not.toBe(viaProxy);
  });

  it('falls back to the address when the request was not authenticated', () => {
    expect(refusalClientKey({ authenticatedIss: undefined, address: '10.0.0.7' })).toBe('address 10.0.0.7');
    expect(refusalClientKey({ authenticatedIss: undefined, address: undefined })).toBe('address unknown');
  });

  describe('edge cases', () => {
    it('never lets an issuer and an address share a key', () => {
      expect(refusalClientKey({ authenticatedIss: '10.0.0.7', address: '10.0.0.7' })).not.toBe(
        refusalClientKey({ authenticatedIss: undefined, address: '10.0.0.7' }),
      );
    });
  });
});

describe('refusals in the app, every client behind one proxy address (loopback here)', () => {
  const EHR = 'https://ehr.larkspur-bay.example';
  const THEATRES = 'https://theatres.larkspur-bay.example';
  /** A stand-in authenticator: the header names the (already trusted) issuer; no header, no entry. */
  const byHeader: Authenticate = (req) => {
    const iss = req.header('x-test-issuer');
    return Promise.resolve(
      iss === undefined
        ? { kind: 'denied', reason: 'missing' }
        : { kind: 'allowed', client: iss, iss, fhirServers: { kind: 'loopback-only' } },
    );
  };
  const SERVICE = '/cds-services/oxygen-order-sign';
  const LIMITS = { maxLinesPerWindow: 2, windowMs: 60_000, maxClients: 100 };

  const refusalLines = (lines: Record<string, unknown>[], status: number) =>
    lines.filter((line) => line['status'] === status);

  it("keys authenticated refusals on the issuer, so one client's flood does not silence another's", async () => {
    const { app, log } = await buildTestApp({ authenticate: byHeader, refusalLogLimits: LIMITS });
    for (let i = 0; i < 6; i += 1) {
      expect((await request(app).post(SERVICE).set('x-test-issuer', EHR)).status).toBe(400);
    }
    expect((await request(app).post(SERVICE).set('x-test-issuer', THEATRES)).status).toBe(400);
    // Two lines for the noisy client, and the quiet one's refusal is still written.
    expect(refusalLines(log.lines(), 400)).toHaveLength(LIMITS.maxLinesPerWindow + 1);
  });

  it('keys unauthenticated refusals on the address, which all such callers behind the proxy share', async () => {
    const { app, log } = await buildTestApp({ authenticate: byHeader, refusalLogLimits: LIMITS });
    for (let i = 0; i < 6; i += 1) {
      expect((await request(app).post(SERVICE)).status).toBe(401);
    }
    expect(refusalLines(log.lines(), 401)).toHaveLength(LIMITS.maxLinesPerWindow);
    // The address's allowance is its own: an authenticated client's refusals are still written.
    expect((await request(app).post(SERVICE).set('x-test-issuer', EHR)).status).toBe(400);
    expect(refusalLines(log.lines(), 400)).toHaveLength(1);
  });
});
