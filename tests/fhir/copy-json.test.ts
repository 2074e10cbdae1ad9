import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { copyJson } from '../../src/fhir/copy-json.js';

/** copyJson must give what `JSON.parse(JSON.stringify(value))` gives, byte for byte and key for key. */

function roundTrip(value: unknown): unknown {
  const text = JSON.stringify(value) as string | undefined;
  return text === undefined ? undefined : (JSON.parse(text) as unknown);
}

/** Same JSON text, same own keys (a `__proto__` key included) and no object shared with the source. */
function expectSameCopy(value: unknown): void {
  const copy = copyJson(value);
  expect(JSON.stringify(copy)).toBe(JSON.stringify(roundTrip(value)));
  expect(copy).toStrictEqual(roundTrip(value));
  if (typeof value === 'object' && value !== null) {
    expect(copy).not.toBe(value);
  }
}

/** Every draft order and resource in the example requests (invented patients). */
function exampleResources(): unknown[] {
  const folder = new URL('../../examples/', import.meta.url);
  return readdirSync(folder)
    .filter((file) => file.endsWith('.json'))
    .flatMap((file) => {
      const request = JSON.parse(readFileSync(new URL(file, folder), 'utf8')) as {
        context?: { draftOrders?: { entry?: { resource?: unknown }[] } };
        prefetch?: Record<string, { entry?: { resource?: unknown }[] } | null>;
      };
      const bundles = [request.context?.draftOrders, ...Object.values(request.prefetch ?? {})];
      return bundles.flatMap((bundle) => (bundle?.entry ?? []).map((entry) => entry.resource));
    });
}

describe('copyJson', () => {
  it('copies every resource of the example requests as the JSON round trip does', () => {
    const resources = exampleResources();
    expect(resources.length).toBeGreaterThan(50);
    resources.forEach(expectSameCopy);
  });

  it('copies deeply: changing the copy leaves the source alone', () => {
    const source = { resourceType: 'MedicationRequest', dosageInstruction: [{ text: '2 L/min', doseAndRate: [{ rateQuantity: { value: 2 } }] }] };
    const copy = copyJson(source) as typeof source;
    (copy.dosageInstruction[0]?.doseAndRate[0]?.rateQuantity as { value: number }).value = 4;
    expect(source.dosageInstruction[0]?.doseAndRate[0]?.rateQuantity.value).toBe(2);
  });

  describe('edge cases', () => {
    it.each([
      ['-0', { value: -0 }],
      ['NaN and infinities', { a: Number.NaN, b: [Number.POSITIVE_INFINITY, -Number.POSITIVE_INFINITY] }],
      ['undefined, functions and symbols', { a: undefined, b: () => 1, c: Symbol('x'), d: [undefined, () => 1], e: 'kept' }],
      ['a date', { at: new Date(Date.UTC(2026, 10, 30, 9, 40)) }],
      ['an own toJSON method', { a: { toJSON: () => 'shown' } }],
      ['a toJSON key that is data', { toJSON: 'data' }],
      ['a Map', { m: new Map([['a', 1]]) }],
      ['a null prototype', Object.assign(Object.create(null) as object, { a: 1 })],
      ['nesting past the direct copy', (() => { let v: unknown = { leaf: 1 }; for (let i = 0; i < 200; i += 1) v = { x: v, y: [i] }; return v; })()],
      ['top-level scalars', 'text'],
      ['null', null],
    ])('copies %s as the round trip does', (_name, value) => {
      expectSameCopy(value);
    });

    it('copies own keys only, as the round trip does, when Object.prototype has an enumerable key', () => {
      Object.defineProperty(Object.prototype, 'injected', { value: 'inherited', enumerable: true, configurable: true, writable: true });
      try {
        const source = { resourceType: 'MedicationRequest', dosageInstruction: [{ text: '2 L/min' }] };
        expectSameCopy(source);
        expect(Object.hasOwn(copyJson(source) as object, 'injected')).toBe(false);
      } finally {
        delete (Object.prototype as Record<string, unknown>)['injected'];
      }
    });

    it('keeps a __proto__ key as an own key, as JSON.parse does', () => {
      const source = JSON.parse('{"__proto__": {"polluted": true}, "id": "x"}') as Record<string, unknown>;
      const copy = copyJson(source) as Record<string, unknown>;
      expect(Object.keys(copy)).toStrictEqual(['__proto__', 'id']);
      expect(Object.getPrototypeOf(copy)).toBe(Object.prototype);
      expect((copy as { polluted?: unknown }).polluted).toBeUndefined();
    });

    it('throws what the round trip throws for a cycle, a BigInt and nesting too deep to serialise', () => {
      const cycle: Record<string, unknown> = { a: 1 };
      cycle['self'] = cycle;
      let deep: Record<string, unknown> = {};
      const root = deep;
      for (let i = 0; i < 20_000; i += 1) {
        const inner: Record<string, unknown> = {};
        deep['x'] = inner;
        deep = inner;
      }
      for (const value of [cycle, { n: 1n }, root]) {
        expect(() => roundTrip(value)).toThrow();
        expect(() => copyJson(value)).toThrow();
      }
    });

    it('returns undefined for undefined, which has no JSON text', () => {
      expect(copyJson(undefined)).toBeUndefined();
    });
  });
});
