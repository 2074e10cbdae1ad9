import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { pruneEmpty } from '../../src/fhir/text-slots.js';

/**
 * pruneEmpty against the rule it applies, written out plainly here: FHIR R4 JSON allows no null, no
 * blank string, no empty array or object as a value, and an Annotation needs its text (FHIR R4,
 * JSON representation and Annotation, from memory); nulls that align a primitive array with its
 * `_name` extensions stay (from memory).
 */
type Json = Record<string, unknown>;
const isPlain = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v);
const isEmpty = (v: unknown): boolean =>
  v === null || v === '' || (Array.isArray(v) && v.length === 0) || (isPlain(v) && Object.keys(v).length === 0);

function expectedItems(items: readonly unknown[], keepNulls: boolean): unknown[] {
  return items
    .map((item) => (Array.isArray(item) ? expectedItems(item, false) : isPlain(item) ? expected(item) : item))
    .filter((item) => !isEmpty(item) || (item === null && keepNulls));
}

function expected(value: Json): Json {
  const out: Json = {};
  const done = new Set<string>();
  // A partner visited before this key is read as pruned, as the walk leaves it.
  const partnerOf = (name: string): unknown => (done.has(name) ? out[name] : value[name]);
  for (const [key, inner] of Object.entries(value)) {
    const notes = key === 'note' && Array.isArray(inner) ? inner.filter((n) => !isPlain(n) || (typeof n['text'] === 'string' && n['text'].trim() !== '')) : inner;
    const partner = /^_[A-Za-z]/.test(key) ? partnerOf(key.slice(1)) : partnerOf(`_${key}`);
    const pruned = Array.isArray(notes)
      ? expectedItems(notes, Array.isArray(partner) && partner.length === notes.length)
      : isPlain(notes)
        ? expected(notes)
        : notes;
    if (!isEmpty(pruned)) out[key] = pruned;
    done.add(key);
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
      fc.property(objects, (value) => {
        const want = expected(structuredClone(value));
        pruneEmpty(value);
        expect(value).toStrictEqual(want);
        expect(JSON.stringify(value)).toBe(JSON.stringify(want));
      }),
      { numRuns: 500 },
    );
  });

  it('has nothing left to remove after one pass', () => {
    fc.assert(
      fc.property(objects, (value) => {
        pruneEmpty(value);
        const once = structuredClone(value);
        pruneEmpty(value);
        expect(value).toStrictEqual(once);
      }),
      { numRuns: 300 },
    );
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
