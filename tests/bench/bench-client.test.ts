import jwt from 'jsonwebtoken';
import { describe, expect, it } from 'vitest';
import { BENCH_ISSUER, audienceOf, createBenchClient, signCalls, trustFileText, type CallSource } from '../../bench/bench-client.js';
import { callFeed } from '../../bench/http-targets.js';
import { parseTrustText } from '../../src/security/trust-config.js';

/**
 * The bench's own CDS client: the trust file it writes is one production accepts, and the calls it
 * signs ahead each carry a token for their own endpoint with a jti no other call has (the service's
 * replay cache refuses one sent twice; CDS Hooks 2.0 §Trusting CDS Clients).
 */

const client = createBenchClient();

describe('trustFileText', () => {
  it('is a trust file production accepts, naming the bench client with its ES384 key', () => {
    const parsed = parseTrustText(trustFileText(client), { requireHttps: true });
    expect(parsed.kind).toBe('ok');
    if (parsed.kind === 'ok') {
      expect([...parsed.trust.clients.keys()]).toEqual([BENCH_ISSUER]);
    }
  });
});

describe('signCalls', () => {
  const sources: CallSource[] = [
    { serviceId: 'oxygen-order-sign', caseName: 'sign', makeBody: () => '{"hook":"order-sign"}' },
    { serviceId: 'oxygen-order-select', caseName: 'select', makeBody: () => '{"hook":"order-select"}' },
  ];

  it('takes the sources in turn, each call with a valid token for its endpoint and a jti of its own', () => {
    const calls = signCalls(client, sources, 6);
    expect(calls.map((c) => c.caseName)).toEqual(['sign', 'select', 'sign', 'select', 'sign', 'select']);
    const jtis = calls.map((call) => {
      const serviceId = call.path.replace('/cds-services/', '');
      const payload = jwt.verify(call.authorization.replace('Bearer ', ''), client.publicKey, {
        algorithms: ['ES384'],
        audience: audienceOf(serviceId),
        issuer: BENCH_ISSUER,
      }) as jwt.JwtPayload;
      // CDS Hooks 2.0 best practices keep a client JWT to an hour at most.
      expect((payload.exp ?? 0) - (payload.iat ?? 0)).toBeLessThanOrEqual(3600);
      return payload.jti;
    });
    expect(new Set(jtis).size).toBe(calls.length);
  });

  it('refuses to sign from no source', () => {
    expect(() => signCalls(client, [], 3)).toThrow(/at least one source/);
  });
});

describe('callFeed', () => {
  const calls = signCalls(client, [{ serviceId: 'oxygen-order-sign', caseName: 'sign', makeBody: () => '{}' }], 5);

  it('never gives the service a call twice, and bounds each run to what is left less the reserve', () => {
    const feed = callFeed(calls, false, 2);
    expect(feed.maxRequests()).toBe(3);
    const sent = [feed.makeRequest(), feed.makeRequest(), feed.makeRequest()].map((r) => r.headers.authorization);
    expect(new Set(sent).size).toBe(3);
    // Two left, both held back: the next run may send one request at most.
    expect(feed.maxRequests()).toBe(1);
  });

  it('gives the baseline the same calls in turn, without a bound', () => {
    const feed = callFeed(calls, true);
    const sent = Array.from({ length: 7 }, () => feed.makeRequest().headers.authorization);
    expect(sent.slice(5)).toEqual(sent.slice(0, 2));
    expect(feed.maxRequests()).toBe(Number.MAX_SAFE_INTEGER);
  });
});
