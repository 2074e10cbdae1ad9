import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { pruneEmpty } from '../../src/fhir/text-slots.js';

/**
 * pruneEmpty against the rule it applies, written out plainly here: FHIR R4 JSON allows no null, no
 * blank string, no empty array or object as a value, and an Annotation needs its text (FHIR R4,
 * JSON representation and Annotation, from memory). A primitive array `name` and its extensions
 * `_name` stay aligned by position, with null where one side has nothing (from memory): a position
 * goes only when both sides are empty there, and an extension side of nothing but nulls goes.
 */
type Json = Record<string, unknown>;
const isPlain = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v);
const isEmpty = (v: unknown): boolean =>
  v === null || v === '' || (Array.isArray(v) && v.length === 0) || (isPlain(v) && Object.keys(v).length === 0);

const expectedItem = (item: unknown): unknown => (Array.isArray(item) ? expectedItems(item) : isPlain(item) ? expected(item) : item);

function expectedItems(items: readonly unknown[]): unknown[] {
  return items.map(expectedItem).filter((item) => !isEmpty(item));
}

/** A `name`/`_name` pair of equal length, by the alignment rule above. */
function expectedPair(values: readonly unknown[], extensions: readonly unknown[]): { values: unknown[]; extensions: unknown[] | undefined } {
  const positions = values
    .map((v, i) => [expectedItem(v), expectedItem(extensions[i])] as const)
    .filter(([v, e]) => !isEmpty(v) || !isEmpty(e))
    .map(([v, e]) => [isEmpty(v) ? null : v, isEmpty(e) ? null : e] as const);
  const kept = positions.map(([, e]) => e);
  return { values: positions.map(([v]) => v), extensions: kept.every((e) => e === null) ? undefined : kept };
}

function expected(value: Json): Json {
  const out: Json = {};
  const pairs = new Map<string, unknown>();
  for (const [key, inner] of Object.entries(value)) {
    const valuesKey = /^_[A-Za-z]/.test(key) ? key.slice(1) : key;
    if (valuesKey !== 'note' && Array.isArray(inner)) {
      const other = valuesKey === key ? value[`_${key}`] : value[valuesKey];
      if (Array.isArray(other) && other.length === inner.length && !pairs.has(key)) {
        const pair = valuesKey === key ? expectedPair(inner, other) : expectedPair(other, inner);
        pairs.set(valuesKey, pair.values);
        pairs.set(`_${valuesKey}`, pair.extensions);
      }
    }
    const notes = key === 'note' && Array.isArray(inner) ? inner.filter((n) => !isPlain(n) || (typeof n['text'] === 'string' && n['text'].trim() !== '')) : inner;
    const pruned = pairs.has(key) ? pairs.get(key) : expectedItem(notes);
    if (pruned !== undefined && !isEmpty(pruned)) out[key] = pruned;
  }
  return out;
}

// JSON values with the shapes an order carries: notes, aligned primitive arrays, blanks and nulls.
const leaves = fc.oneof(fc.constantFrom('', ' ', 'Oxygen 2 L/min', null, 0, false), fc.integer(), fc.string({ maxLength: 4 }));
const { tree } = fc.letrec<{ tree: unknown }>((tie) => ({
  tree: fc.oneof(
    { depthSize: 'small' },
    leaves,
    fc.array(tie('tree'), { maxLength: 4 }),
    fc.dictionary(fc.constantFrom('note', 'text', 'given', '_given', 'coding', 'display', 'extension', 'x'), tie('tree'), { maxKeys: 5, noNullPrototype: true }),
  ),
}));
const objects = fc.dictionary(fc.constantFrom('note', 'given', '_given', 'code', 'dosageInstruction', 'patientInstruction'), tree, { maxKeys: 6, noNullPrototype: true });

describe('pruneEmpty, against the rule it applies', () => {
  it('leaves exactly what the rule keeps, key order included', () => {
    fc.assert(
      // Each side works on its own copy: the generated value stays as generated, so a failure reports it.
      fc.property(objects, (generated) => {
        const want = expected(structuredClone(generated));
        const value = structuredClone(generated);
        pruneEmpty(value);
        expect(value).toStrictEqual(want);
        expect(JSON.stringify(value)).toBe(JSON.stringify(want));
      }),
      { numRuns: 500 },
    );
  });

  it('has nothing left to remove after one pass', () => {
    fc.assert(
      fc.property(objects, (generated) => {
        const value = structuredClone(generated);
        pruneEmpty(value);
        const once = structuredClone(value);
        pruneEmpty(value);
        expect(value).toStrictEqual(once);
      }),
      { numRuns: 300 },
    );
  });

  it('keeps a primitive array and its extensions aligned, position by position', () => {
    // FHIR R4 JSON, primitive arrays with extensions aligned by nulls (from memory).
    const extension = [{ url: 'http://example.org/fhir/StructureDefinition/larkspur-note', valueString: 'ward 4' }];
    const blankValue = { given: ['Oxygen', ''], _given: [null, { extension }] };
    pruneEmpty(blankValue);
    expect(blankValue).toStrictEqual({ given: ['Oxygen', null], _given: [null, { extension }] });

    const bothEmpty = { given: ['Oxygen', '', 'titrate'], _given: [{ extension }, null, null] };
    pruneEmpty(bothEmpty);
    expect(bothEmpty).toStrictEqual({ given: ['Oxygen', 'titrate'], _given: [{ extension }, null] });

    const noExtensionsLeft = { _given: [null, {}], given: ['Oxygen', 'titrate'] };
    pruneEmpty(noExtensionsLeft);
    expect(noExtensionsLeft).toStrictEqual({ given: ['Oxygen', 'titrate'] });

    // Lengths that differ as they arrive are not aligned: each side loses its empty items, nulls too.
    const unequal = { given: ['Oxygen', '', 'titrate'], _given: [null, { extension }] };
    pruneEmpty(unequal);
    expect(unequal).toStrictEqual({ given: ['Oxygen', 'titrate'], _given: [{ extension }] });
  });

  it('keeps the arrays of a value with nothing to remove, building none', () => {
    const coding = [{ system: 'http://snomed.info/sct', code: '57485005', display: 'Oxygen therapy' }]; // SNOMED CT oxygen therapy
    const note = [{ text: 'Larkspur Bay ward 4' }];
    const value = { code: { coding, text: 'Oxygen therapy' }, note };
    pruneEmpty(value);
    expect(value.code.coding).toBe(coding);
    expect(value.note).toBe(note);
    const withBlank = { note: [{ text: ' ' }, { text: 'kept' }] };
    const before = withBlank.note;
    pruneEmpty(withBlank);
    expect(withBlank.note).toStrictEqual([{ text: 'kept' }]);
    expect(withBlank.note).not.toBe(before);
  });
});
