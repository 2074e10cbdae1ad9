import { describe, expect, it } from 'vitest';
import { readBearerToken } from '../../src/security/bearer-token.js';

describe('readBearerToken', () => {
  it('reads the token of a Bearer header (RFC 6750 §2.1)', () => {
    expect(readBearerToken('Bearer eyJh.eyJp.c2ln')).toStrictEqual({ kind: 'token', token: 'eyJh.eyJp.c2ln' });
  });

  it.each([
    // RFC 9110 §11.1: the auth scheme is case-insensitive
    ['bearer abc.def.ghi', 'abc.def.ghi'],
    ['BEARER abc.def.ghi', 'abc.def.ghi'],
    // RFC 6750 §2.1 b64token allows ~ + / and trailing =
    ['Bearer a~b+c/d==', 'a~b+c/d=='],
  ])('reads %s', (header, token) => {
    expect(readBearerToken(header)).toStrictEqual({ kind: 'token', token });
  });

  it.each([
    // RFC 6750 §3.1: no credentials, or another scheme, gets a challenge without an error code
    [undefined, 'none'],
    ['', 'none'],
    ['Basic bGFya3NwdXI6YmF5', 'none'],
    ['Bearer', 'malformed'],
    ['Bearer ', 'malformed'],
    ['Bearer abc def', 'malformed'],
    ['Bearer a"b', 'malformed'],
    ['Bearer a=b', 'malformed'],
    ['Bearer\tabc', 'malformed'],
  ])('reads %j as %s', (header, kind) => {
    expect(readBearerToken(header).kind).toBe(kind);
  });

  describe('edge cases', () => {
    it('tolerates extra spaces between scheme and token', () => {
      expect(readBearerToken('Bearer   abc')).toStrictEqual({ kind: 'token', token: 'abc' });
    });
  });
});
