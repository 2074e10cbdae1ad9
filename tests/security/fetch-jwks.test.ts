import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { fetchJwks, type JwksFetchOptions } from '../../src/security/fetch-jwks.js';
import { SPEC_JWKS } from '../fixtures/security/spec-jwt-example.js';
import { startJwksServer, type JwksServer } from './support/jwks-server.js';

let server: JwksServer;
let elsewhere: JwksServer;

const options: JwksFetchOptions = { fetch: globalThis.fetch, timeoutMs: 1000, maxBytes: 4096, requireHttps: false };

beforeAll(async () => {
  server = await startJwksServer(SPEC_JWKS.keys);
  elsewhere = await startJwksServer(SPEC_JWKS.keys);
});

afterEach(() => {
  server.setKeys(SPEC_JWKS.keys);
  server.hits.length = 0;
  elsewhere.hits.length = 0;
});

afterAll(async () => {
  await server.close();
  await elsewhere.close();
});

describe('fetchJwks', () => {
  it('reads the keys of a JWK Set (RFC 7517 §5)', async () => {
    const outcome = await fetchJwks(server.url, options);
    expect(outcome.kind === 'ok' ? [[...outcome.keys.keys()], outcome.skipped] : outcome).toStrictEqual([['example-kid'], 0]);
    expect(server.hits).toStrictEqual(['/jwks.json']);
  });

  it('never fetches an http URL when https is required', async () => {
    // CDS Hooks 2.0 §Security and Safety: HTTPS only
    expect(await fetchJwks(server.url, { ...options, requireHttps: true })).toStrictEqual({ kind: 'failed', failure: 'not-https' });
    expect(server.hits).toStrictEqual([]);
  });

  it('does not follow a redirect', async () => {
    server.setReply(() => ({ status: 302, headers: { Location: elsewhere.url } }));
    expect(await fetchJwks(server.url, options)).toStrictEqual({ kind: 'failed', failure: 'redirect' });
    expect(elsewhere.hits).toStrictEqual([]);
  });

  it.each([
    ['declared', { 'Content-Length': '5000' }],
    ['streamed', { 'Transfer-Encoding': 'chunked' }],
  ])('stops reading a body over the size cap (%s length)', async (_name, headers) => {
    const body = JSON.stringify({ keys: [], pad: 'x'.repeat(4980) });
    server.setReply(() => ({ status: 200, body: body.slice(0, 5000), headers }));
    expect(await fetchJwks(server.url, options)).toStrictEqual({ kind: 'failed', failure: 'too-large' });
  });

  it('gives up when the server does not answer within the timeout', async () => {
    server.setReply(() => ({ status: 200, hang: true }));
    expect(await fetchJwks(server.url, { ...options, timeoutMs: 50 })).toStrictEqual({ kind: 'failed', failure: 'timeout' });
  });

  it.each([
    ['an error status', { status: 500, body: '{}' }, 'http-status'],
    ['a body that is not JSON', { status: 200, body: '<html>' }, 'invalid-json'],
    ['JSON that is not a JWK Set', { status: 200, body: '{"jwks":[]}' }, 'not-jwks'],
  ])('fails on %s', async (_name, reply, failure) => {
    server.setReply(() => reply);
    expect(await fetchJwks(server.url, options)).toStrictEqual({ kind: 'failed', failure });
  });

  describe('edge cases', () => {
    it('refuses URLs with credentials or that do not parse, without a request', async () => {
      const withUser = server.url.replace('http://', 'http://ops:secret@');
      expect(await fetchJwks(withUser, options)).toStrictEqual({ kind: 'failed', failure: 'invalid-url' });
      expect(await fetchJwks('jwks.json', options)).toStrictEqual({ kind: 'failed', failure: 'invalid-url' });
      expect(server.hits).toStrictEqual([]);
    });

    it('reports an unreachable server as a network failure', async () => {
      const closed = await startJwksServer();
      const url = closed.url;
      await closed.close();
      expect(await fetchJwks(url, options)).toStrictEqual({ kind: 'failed', failure: 'network' });
    });
  });
});
