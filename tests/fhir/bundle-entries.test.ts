import { describe, expect, it } from 'vitest';
import { flattenResources, referenceOf } from '../../src/fhir/bundle-entries.js';

describe('flattenResources', () => {
  const spo2 = { resourceType: 'Observation', id: 'o1' };
  const rr = { resourceType: 'Observation', id: 'o2' };

  it('opens searchset Bundles, pages given as a list, and nested Bundles', () => {
    const page1 = { resourceType: 'Bundle', type: 'searchset', entry: [{ resource: spo2 }] };
    const page2 = { resourceType: 'Bundle', type: 'searchset', entry: [{ resource: { resourceType: 'Bundle', entry: [{ resource: rr }] } }] };
    expect(flattenResources([page1, page2]).entries.map((e) => e.resource)).toStrictEqual([spo2, rr]);
  });

  it('turns an OperationOutcome into a note (cds-hooks.md §3.4)', () => {
    const outcome = { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'not-found', details: { text: 'No such patient' } }] };
    expect(flattenResources({ resourceType: 'Bundle', entry: [{ resource: outcome }, { resource: spo2 }] })).toStrictEqual({
      entries: [{ resource: spo2, fullUrl: undefined }],
      notes: [{ what: 'OperationOutcome', reason: 'error-in-source', detail: 'The EHR reported a problem getting data: No such patient', reference: undefined }],
    });
  });

  it('reads a Bundle sent without its resourceType or type', () => {
    expect(flattenResources({ entry: [{ resource: spo2 }] }).entries).toHaveLength(1);
  });

  describe('edge cases', () => {
    it.each([[null], [undefined], ['x'], [7], [{}], [{ resourceType: 'bundle' }], [{ resourceType: 'Bundle', entry: 'x' }]])(
      'gives nothing for %j',
      (value) => {
        expect(flattenResources(value)).toStrictEqual({ entries: [], notes: [] });
      },
    );

    it('stops at a nesting depth no client sends', () => {
      let deep: unknown = spo2;
      for (let i = 0; i < 10; i += 1) deep = { resourceType: 'Bundle', entry: [{ resource: deep }] };
      expect(flattenResources(deep).entries).toStrictEqual([]);
    });
  });
});

describe('referenceOf', () => {
  it('uses Type/id, else the fullUrl, else the position', () => {
    const resource = { resourceType: 'ServiceRequest' };
    expect(referenceOf({ resource: { ...resource, id: '7' }, fullUrl: 'urn:uuid:a' }, 0)).toBe('ServiceRequest/7');
    expect(referenceOf({ resource, fullUrl: 'urn:uuid:a' }, 0)).toBe('urn:uuid:a');
    expect(referenceOf({ resource, fullUrl: undefined }, 2)).toBe('ServiceRequest/entry-3');
  });
});
