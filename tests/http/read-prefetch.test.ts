import { describe, expect, it } from 'vitest';
import { readPrefetchKey, readPrefetchValue } from '../../src/http/read-prefetch.js';

// Invented Larkspur Bay General Hospital data.
const patient = { resourceType: 'Patient', id: 'lb-pt-0417', birthDate: '1951-09-30' };
const spo2 = {
  resourceType: 'Observation',
  id: 'lb-obs-1',
  status: 'final',
  code: { coding: [{ system: 'http://loinc.org', code: '59408-5' }] },
  valueQuantity: { value: 89, unit: '%', system: 'http://unitsofmeasure.org', code: '%' },
};

describe('readPrefetchValue', () => {
  // CDS Hooks 2.0 §Prefetch Template: the five cases a service must handle
  it('reads an absent key as absent', () => {
    expect(readPrefetchKey({ other: null }, 'patient')).toStrictEqual({ kind: 'absent' });
    expect(readPrefetchKey(undefined, 'patient')).toStrictEqual({ kind: 'absent' });
  });

  it('reads null as looked-and-found-nothing', () => {
    expect(readPrefetchKey({ patient: null }, 'patient')).toStrictEqual({ kind: 'empty' });
  });

  it('reads a resource as a read result', () => {
    expect(readPrefetchValue(true, patient)).toStrictEqual({
      kind: 'resources',
      resources: [patient],
      nextUrl: undefined,
    });
  });

  it('flattens a searchset Bundle and keeps its next link', () => {
    const bundle = {
      resourceType: 'Bundle',
      type: 'searchset',
      link: [
        { relation: 'self', url: 'https://fhir.larkspur-bay.example/r4/Observation?patient=lb-pt-0417' },
        { relation: 'next', url: 'https://fhir.larkspur-bay.example/r4/Observation?page=2' },
      ],
      entry: [{ resource: spo2, search: { mode: 'match' } }],
    };
    expect(readPrefetchValue(true, bundle)).toStrictEqual({
      kind: 'resources',
      resources: [spo2],
      nextUrl: 'https://fhir.larkspur-bay.example/r4/Observation?page=2',
    });
  });

  it('reads a searchset with no entries as found-nothing', () => {
    // CDS Hooks 2.0 §Prefetch Template: a search may return a searchset Bundle with zero entries
    expect(readPrefetchValue(true, { resourceType: 'Bundle', type: 'searchset', total: 0 })).toStrictEqual({
      kind: 'empty',
    });
  });

  it('reads an OperationOutcome in place of data as unusable', () => {
    const outcome = {
      resourceType: 'OperationOutcome',
      issue: [{ severity: 'error', code: 'timeout', diagnostics: 'upstream timeout' }],
    };
    expect(readPrefetchValue(true, outcome)).toStrictEqual({
      kind: 'unusable',
      reason: 'the value is an OperationOutcome (an error while prefetching)',
    });
  });

  it('reads a Bundle carrying an OperationOutcome error as unusable', () => {
    const bundle = {
      resourceType: 'Bundle',
      type: 'searchset',
      entry: [
        { resource: spo2 },
        {
          resource: { resourceType: 'OperationOutcome', issue: [{ severity: 'fatal', code: 'exception' }] },
          search: { mode: 'outcome' },
        },
      ],
    };
    expect(readPrefetchValue(true, bundle)).toStrictEqual({
      kind: 'unusable',
      reason: 'the search result carried an OperationOutcome error',
    });
  });

  describe('edge cases', () => {
    it('drops an OperationOutcome entry that only warns and keeps the matches', () => {
      // FHIR R4 Bundle.entry.search.mode "outcome": information or warnings about the search
      const bundle = {
        resourceType: 'Bundle',
        type: 'searchset',
        entry: [
          { resource: spo2 },
          {
            resource: { resourceType: 'OperationOutcome', issue: [{ severity: 'warning', code: 'incomplete' }] },
            search: { mode: 'outcome' },
          },
        ],
      };
      expect(readPrefetchValue(true, bundle)).toStrictEqual({
        kind: 'resources',
        resources: [spo2],
        nextUrl: undefined,
      });
    });

    it('reads a Bundle without type as a list (hook examples often omit it)', () => {
      expect(readPrefetchValue(true, { resourceType: 'Bundle', entry: [{ resource: spo2 }] })).toStrictEqual({
        kind: 'resources',
        resources: [spo2],
        nextUrl: undefined,
      });
    });

    it('skips entries that are not resources', () => {
      const bundle = { resourceType: 'Bundle', entry: [{ fullUrl: 'urn:uuid:1' }, { resource: 'text' }, { resource: spo2 }] };
      expect(readPrefetchValue(true, bundle)).toStrictEqual({
        kind: 'resources',
        resources: [spo2],
        nextUrl: undefined,
      });
    });

    it.each([
      ['a string', 'Patient/lb-pt-0417'],
      ['a number', 42],
      ['an array', [patient]],
      ['an object without resourceType', { id: 'lb-pt-0417' }],
    ])('reads %s as unusable', (_what, value) => {
      expect(readPrefetchValue(true, value)).toStrictEqual({
        kind: 'unusable',
        reason: 'the value is not a FHIR resource',
      });
    });

    it('reads a Bundle whose entry is not a list as unusable', () => {
      expect(readPrefetchValue(true, { resourceType: 'Bundle', entry: { resource: spo2 } })).toStrictEqual({
        kind: 'unusable',
        reason: 'the Bundle entry element is not a list',
      });
    });

    it('ignores a key present on the prototype only', () => {
      expect(readPrefetchKey(Object.create({ patient }) as Record<string, unknown>, 'patient')).toStrictEqual({
        kind: 'absent',
      });
    });
  });
});
