import { chmodSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { createHmac } from 'node:crypto';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadOrCreateSecret, patientKey, SECRET_FILE_NAME } from '../../src/store/patient-key.js';
import { useTempDirs } from './support/temp-dir.js';

const SECRET = Buffer.from('7d1f0c5e9a2b4c8d6e3f1a0b9c8d7e6f5a4b3c2d1e0f9a8b7c6d5e4f3a2b1c0d', 'latin1');
const SERVER = 'https://fhir.larkspur-bay.example/r4';

describe('loadOrCreateSecret', () => {
  const tempDir = useTempDirs();

  it('creates an owner-only secret of 32 random bytes on first start and reuses it later', () => {
    const dataDir = tempDir();
    const first = loadOrCreateSecret({ dataDir });
    expect(first).toMatchObject({ kind: 'loaded', created: true, file: join(dataDir, SECRET_FILE_NAME) });
    // 32 random bytes as hex: 64 hex digits
    expect(readFileSync(join(dataDir, SECRET_FILE_NAME), 'utf8')).toMatch(/^[0-9a-f]{64}\n$/);
    expect(statSync(join(dataDir, SECRET_FILE_NAME)).mode & 0o777).toBe(0o600);
    expect(readdirSync(dataDir)).toStrictEqual([SECRET_FILE_NAME]);

    const second = loadOrCreateSecret({ dataDir });
    expect(second).toMatchObject({ kind: 'loaded', created: false });
    if (first.kind === 'loaded' && second.kind === 'loaded') {
      expect(second.secret.equals(first.secret)).toBe(true);
    }
  });

  it('gives each new data directory its own secret', () => {
    const one = loadOrCreateSecret({ dataDir: tempDir() });
    const two = loadOrCreateSecret({ dataDir: tempDir() });
    expect(one.kind === 'loaded' && two.kind === 'loaded' && one.secret.equals(two.secret)).toBe(false);
  });

  it('uses a configured secret file as it is and creates nothing', () => {
    const dataDir = tempDir();
    const file = join(tempDir(), 'configured.secret');
    writeFileSync(file, `${SECRET.toString('latin1')}\n`, { mode: 0o600 });
    const result = loadOrCreateSecret({ dataDir, secretFile: file });
    expect(result).toMatchObject({ kind: 'loaded', created: false, file });
    expect(result.kind === 'loaded' && result.secret.equals(SECRET)).toBe(true);
    expect(readdirSync(dataDir)).toStrictEqual([]);
  });

  it.each([0o640, 0o604, 0o660, 0o644])('refuses a configured secret with mode %o (open to group or others)', (mode) => {
    const file = join(tempDir(), 'configured.secret');
    writeFileSync(file, SECRET);
    chmodSync(file, mode);
    const result = loadOrCreateSecret({ dataDir: tempDir(), secretFile: file });
    expect(result.kind).toBe('refused');
    expect(result.kind === 'refused' ? result.problem : '').toMatch(/chmod 600/);
  });

  it('refuses a configured secret shorter than 32 bytes', () => {
    // RFC 2104 §3: keys shorter than the hash output (32 bytes for SHA-256) are strongly discouraged
    const file = join(tempDir(), 'configured.secret');
    writeFileSync(file, 'x'.repeat(31), { mode: 0o600 });
    const result = loadOrCreateSecret({ dataDir: tempDir(), secretFile: file });
    expect(result.kind === 'refused' ? result.problem : '').toMatch(/holds 31 bytes/);
  });

  it('refuses a configured secret file that does not exist, and does not create it', () => {
    const file = join(tempDir(), 'missing.secret');
    const result = loadOrCreateSecret({ dataDir: tempDir(), secretFile: file });
    expect(result.kind === 'refused' ? result.problem : '').toMatch(/ENOENT/);
    expect(() => statSync(file)).toThrow();
  });

  it('refuses a secret in the data directory that someone loosened', () => {
    const dataDir = tempDir();
    loadOrCreateSecret({ dataDir });
    chmodSync(join(dataDir, SECRET_FILE_NAME), 0o644);
    expect(loadOrCreateSecret({ dataDir }).kind).toBe('refused');
  });
});

describe('patientKey', () => {
  it('is HMAC-SHA256 over the length-prefixed server and patient id, cut to 32 hex digits', () => {
    // RFC 2104 (HMAC) with SHA-256 (FIPS 180-4), computed here independently with node:crypto
    const prefixed = (text: string): Buffer => {
      const bytes = Buffer.from(text, 'utf8');
      const length = Buffer.alloc(4);
      length.writeUInt32BE(bytes.length);
      return Buffer.concat([length, bytes]);
    };
    const expected = createHmac('sha256', SECRET)
      .update(Buffer.concat([prefixed(SERVER), prefixed('lbgh-pt-20417')]))
      .digest('hex')
      .slice(0, 32);
    expect(patientKey(SECRET, { fhirServer: SERVER, patientId: 'lbgh-pt-20417' })).toBe(expected);
    expect(expected).toMatch(/^[0-9a-f]{32}$/);
  });

  it.each([
    ['an id in ASCII', 'lbgh-pt-20417'],
    ['an id with two-byte UTF-8 characters', 'patiënt-ø-20417'],
    ['an id with three-byte UTF-8 characters', '患者-20417'],
    ['an id with a four-byte UTF-8 character', 'pt-\u{1F600}-20417'],
    ['an id with a lone surrogate (written as U+FFFD)', 'pt-\uD800-20417'],
  ])('prefixes %s with its length in UTF-8 bytes, not in characters', (_label, patientId) => {
    // RFC 3629 (UTF-8): the MAC reads the bytes, so the length before each text counts bytes too;
    // the expected key is built from the encoded bytes themselves, independently of the code under test
    const prefixed = (text: string): Buffer => {
      const bytes = Buffer.from(text, 'utf8');
      const length = Buffer.alloc(4);
      length.writeUInt32BE(bytes.length);
      return Buffer.concat([length, bytes]);
    };
    const server = 'https://fhir.larkspur-bay.example/r4/é';
    const expected = createHmac('sha256', SECRET)
      .update(Buffer.concat([prefixed(server), prefixed(patientId)]))
      .digest('hex')
      .slice(0, 32);
    expect(patientKey(SECRET, { fhirServer: server, patientId })).toBe(expected);
  });

  it('is the same for one patient on the same server, trailing slash or not', () => {
    const a = patientKey(SECRET, { fhirServer: SERVER, patientId: 'lbgh-pt-20417' });
    expect(patientKey(SECRET, { fhirServer: `${SERVER}/`, patientId: 'lbgh-pt-20417' })).toBe(a);
  });

  it('tells apart patients, servers, secrets and fields run together', () => {
    const keys = [
      patientKey(SECRET, { fhirServer: SERVER, patientId: 'lbgh-pt-20417' }),
      patientKey(SECRET, { fhirServer: SERVER, patientId: 'lbgh-pt-20418' }),
      patientKey(SECRET, { fhirServer: 'https://fhir.larkspur-bay.example/r4-north', patientId: 'lbgh-pt-20417' }),
      patientKey(Buffer.from('a different secret of at least thirty-two bytes'), { fhirServer: SERVER, patientId: 'lbgh-pt-20417' }),
      patientKey(SECRET, { fhirServer: 'https://fhir.larkspur-bay.example/r', patientId: '4lbgh-pt-20417' }),
      patientKey(SECRET, { patientId: 'lbgh-pt-20417' }),
    ];
    expect(new Set(keys).size).toBe(keys.length);
  });
});
