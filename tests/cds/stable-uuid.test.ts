import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { CARD_UUID_NAMESPACE, cardUuid, suggestionUuid, uuidV5 } from '../../src/cds/stable-uuid.js';

const NAMESPACE_DNS = '6ba7b810-9dad-11d1-80b4-00c04fd430c8'; // RFC 9562 §6.6 (from memory)
const NAMESPACE_URL = '6ba7b811-9dad-11d1-80b4-00c04fd430c8'; // RFC 9562 §6.6 (from memory)
const V5 = /^[0-9a-f]{8}-[0-9a-f]{4}-5[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;

describe('uuidV5', () => {
  it.each([
    // RFC 9562 Appendix A.4 example (from memory; the same value from Python's uuid.uuid5)
    [NAMESPACE_DNS, 'www.example.com', '2ed6657d-e927-568b-95e1-2665a8aea6a2'],
    // Python documentation example for uuid.uuid5 (from memory; checked with Python's uuid module)
    [NAMESPACE_DNS, 'python.org', '886313e1-3b8a-5372-9b90-0c9aee199e5d'],
    // Our namespace is itself derived this way (stable-uuid.ts)
    [NAMESPACE_URL, 'urn:oxygen-order-checker', CARD_UUID_NAMESPACE],
  ])('derives uuidv5(%s, %s) = %s', (namespace, name, expected) => {
    expect(uuidV5(namespace, name)).toBe(expected);
  });

  /** RFC 9562 §5.5 as written: SHA-1 of the namespace's 16 bytes then the name's UTF-8, version and variant set. */
  function rfcV5(namespace: string, name: string): string {
    const digest = createHash('sha1')
      .update(Buffer.from(namespace.replaceAll('-', ''), 'hex'))
      .update(Buffer.from(name, 'utf8'))
      .digest();
    digest[6] = ((digest[6] ?? 0) & 0x0f) | 0x50;
    digest[8] = ((digest[8] ?? 0) & 0x3f) | 0x80;
    const hex = digest.subarray(0, 16).toString('hex');
    return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`;
  }

  it.each([
    ['a short ASCII name', 'hook-1\nrule-a\nServiceRequest/1'],
    ['an empty name', ''],
    ['non-ASCII text (2- and 3-byte UTF-8)', 'Ward Ōtautahi – SpO2 ≥ 94 %'],
    ['a character outside the BMP (4-byte UTF-8)', 'order 😀 1'],
    ['a lone surrogate (written as U+FFFD)', 'bad \ud800 half'],
    ['a name longer than any card uuid name', 'x'.repeat(5000)],
    ['a long name of 3-byte characters', '–'.repeat(400)],
  ])('hashes %s as RFC 9562 §5.5 defines, under any namespace', (_what, name) => {
    for (const namespace of [CARD_UUID_NAMESPACE, NAMESPACE_DNS, NAMESPACE_URL]) {
      expect(uuidV5(namespace, name)).toBe(rfcV5(namespace, name));
    }
  });

  it('gives each uuid its own namespace when namespaces take turns', () => {
    // Names hashed under one namespace, then another, then the first again: none borrows the other's bytes.
    const name = 'hook-1\nrule-a\nServiceRequest/1';
    const turns = [CARD_UUID_NAMESPACE, NAMESPACE_DNS, CARD_UUID_NAMESPACE, NAMESPACE_URL, CARD_UUID_NAMESPACE];
    expect(turns.map((namespace) => uuidV5(namespace, name))).toEqual(turns.map((namespace) => rfcV5(namespace, name)));
    const card = cardUuid('hook-1', 'rule-a', 'ServiceRequest/1');
    expect(suggestionUuid(card, 0)).toBe(rfcV5(card, 'suggestion\n0'));
    expect(cardUuid('hook-1', 'rule-a', 'ServiceRequest/1')).toBe(card);
  });

  it('throws on a namespace that is not a UUID (a programmer error)', () => {
    expect(() => uuidV5('not-a-uuid', 'x')).toThrow('uuidV5: namespace must be a UUID');
  });
});

describe('cardUuid', () => {
  const hookInstance = '5b0e8f9c-7a41-4d2e-9c1b-1f6a2d3e4b5c';

  it('gives the same uuid for the same hook call, rule and order', () => {
    const first = cardUuid(hookInstance, 'target-above-hypercapnic-range', 'ServiceRequest/lb-o2-0001');
    expect(cardUuid(hookInstance, 'target-above-hypercapnic-range', 'ServiceRequest/lb-o2-0001')).toBe(first);
    expect(first).toMatch(V5);
  });

  it('gives different uuids when any input differs', () => {
    const uuids = new Set([
      cardUuid(hookInstance, 'rule-a', 'ServiceRequest/1'),
      cardUuid(hookInstance, 'rule-b', 'ServiceRequest/1'),
      cardUuid(hookInstance, 'rule-a', 'ServiceRequest/2'),
      cardUuid(hookInstance, 'rule-a', undefined),
      cardUuid('0c6b1e2a-3d4f-4a5b-8c6d-7e8f9a0b1c2d', 'rule-a', 'ServiceRequest/1'),
      cardUuid(hookInstance, 'rule-a', 'ServiceRequest/1', 1),
    ]);
    expect(uuids.size).toBe(6);
  });

  it('derives suggestion uuids from the card uuid and position', () => {
    const card = cardUuid(hookInstance, 'rule-a', 'ServiceRequest/1');
    expect(suggestionUuid(card, 0)).toBe(suggestionUuid(card, 0));
    expect(suggestionUuid(card, 0)).not.toBe(suggestionUuid(card, 1));
    expect(suggestionUuid(card, 0)).toMatch(V5);
  });

  it('hashes under our namespace as uuidV5 does, its bytes read once', () => {
    // Checked with Python's uuid module: uuid.uuid5(UUID(CARD_UUID_NAMESPACE), 'hook-1\nspo2-below-target\nMedicationRequest/o2-1')
    const expected = '60820cc0-e4a3-54b3-aea5-a37d0b90bb4b';
    expect(cardUuid('hook-1', 'spo2-below-target', 'MedicationRequest/o2-1')).toBe(expected);
    expect(uuidV5(CARD_UUID_NAMESPACE, 'hook-1\nspo2-below-target\nMedicationRequest/o2-1')).toBe(expected);
    // The same namespace written in capitals names the same bytes (RFC 9562 §4, hex is case-insensitive; from memory).
    expect(uuidV5(CARD_UUID_NAMESPACE.toUpperCase(), 'hook-1\nspo2-below-target\nMedicationRequest/o2-1')).toBe(expected);
  });

  describe('edge cases', () => {
    it('treats occurrence 0 as the plain name', () => {
      expect(cardUuid(hookInstance, 'rule-a', 'ServiceRequest/1', 0)).toBe(cardUuid(hookInstance, 'rule-a', 'ServiceRequest/1'));
    });
  });
});
