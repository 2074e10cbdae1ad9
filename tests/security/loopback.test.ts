import { describe, expect, it } from 'vitest';
import { isLoopbackHost } from '../../src/security/loopback.js';

describe('isLoopbackHost', () => {
  it.each([
    // RFC 1122 §3.2.1.3: all of 127.0.0.0/8 is loopback
    ['127.0.0.1', true],
    ['127.255.255.254', true],
    // RFC 4291 §2.5.3: ::1
    ['::1', true],
    ['[::1]', true],
    // RFC 6761 §6.3: localhost
    ['localhost', true],
    ['LOCALHOST', true],
    ['0.0.0.0', false],
    ['::', false],
    ['10.0.0.8', false],
    ['128.0.0.1', false],
    ['localhost.larkspur-bay.example', false],
    ['cds.larkspur-bay.example', false],
  ])('%s is loopback: %s', (host, loopback) => {
    expect(isLoopbackHost(host)).toBe(loopback);
  });

  describe('edge cases', () => {
    it('refuses dotted quads with octets over 255', () => {
      expect(isLoopbackHost('127.0.0.256')).toBe(false);
    });
  });
});
