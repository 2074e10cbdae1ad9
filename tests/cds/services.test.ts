import { describe, expect, it } from 'vitest';
import { DiscoveryResponseSchema } from '../../src/cds/schemas.js';
import {
  CDS_SERVICES,
  discoveryResponse,
  expandPrefetchTemplate,
  findService,
  PREFETCH_KEYS,
  PREFETCH_TOKENS,
} from '../../src/cds/services.js';

const context = { userId: 'Practitioner/lb-dr-0042', patientId: 'lb-pt-0001', encounterId: 'lb-enc-0001' };

describe('discoveryResponse', () => {
  it('lists the three services with hook, description and id', () => {
    // CDS Hooks 2.0 §Discovery › Response: hook, description and id are REQUIRED; cds-hooks.md §12 item 1
    const body = discoveryResponse();
    expect(DiscoveryResponseSchema.safeParse(body).success).toBe(true);
    expect(body.services.map((s) => [s.id, s.hook])).toStrictEqual([
      ['oxygen-order-sign', 'order-sign'],
      ['oxygen-order-select', 'order-select'],
      ['oxygen-titration-review', 'patient-view'],
    ]);
    for (const service of body.services) {
      expect(service.description.length).toBeGreaterThan(0);
      expect(service.title?.length).toBeGreaterThan(0);
      expect(service.usageRequirements?.length).toBeGreaterThan(0);
    }
  });

  it('uses only the prefetch tokens valid for order-sign, order-select and patient-view', () => {
    // CDS Hooks 2.0 #prefetch-tokens: root-level primitive context fields and the four user tokens
    const tokens = discoveryResponse().services.flatMap((s) =>
      Object.values(s.prefetch ?? {}).flatMap((t) => [...t.matchAll(/\{\{([^}]*)\}\}/g)].map((m) => m[1])),
    );
    expect(tokens.length).toBeGreaterThan(0);
    for (const token of tokens) {
      expect(PREFETCH_TOKENS).toContain(token);
    }
  });

  it('keeps every template inside the recommended query subset', () => {
    // CDS Hooks 2.0 #prefetch-query-restrictions: reads, type searches, reference and token
    // equality parameters, _sort and _count; no other modifiers
    const allowedParams = new Set(['patient', 'code', 'status', '_sort', '_count']);
    for (const { template } of Object.values(PREFETCH_KEYS)) {
      const [path, query] = template.split('?');
      expect(path).toMatch(/^[A-Z][A-Za-z]+(\/\{\{context\.[a-zA-Z]+\}\})?$/);
      for (const pair of query === undefined ? [] : query.split('&')) {
        const [name] = pair.split('=');
        expect(allowedParams.has(name ?? '')).toBe(true);
        expect(name).not.toContain(':');
      }
    }
  });

  it('asks for the observation codes the readers use, most recent first', () => {
    // LOINC codes: check-values.md §6 (V, except venous PCO2 2021-4: from memory)
    expect(PREFETCH_KEYS.observations.template).toBe(
      'Observation?patient={{context.patientId}}&code=' +
        [
          '59408-5', '2708-6', '3150-0', '3151-8', '9279-1', '2703-7', '2019-8', '2744-1',
          '1960-4', '1963-8', '1925-7', '2746-6', '2705-2', '2021-4', '718-7', '39156-5',
        ]
          .map((code) => `http://loinc.org|${code}`)
          .join(',') +
        '&_sort=-date&_count=100',
    );
  });

  it('does not filter conditions by a status parameter R4 lacks', () => {
    // cds-hooks.md §10: Condition "status" is not R4 syntax; R4 uses clinical-status
    expect(PREFETCH_KEYS.conditions.template).toBe('Condition?patient={{context.patientId}}');
  });

  it('marks patient, observations and conditions required and the rest optional', () => {
    expect(Object.entries(PREFETCH_KEYS).map(([key, d]) => [key, d.required])).toStrictEqual([
      ['patient', true],
      ['observations', true],
      ['conditions', true],
      ['encounter', false],
      ['medicationRequests', false],
      ['serviceRequests', false],
      ['deviceRequests', false],
    ]);
  });

  it('finds a service by id and nothing for an unknown id', () => {
    expect(findService('oxygen-order-select')?.hook).toBe('order-select');
    expect(findService('no-such-service')).toBeUndefined();
    expect(findService('oxygen-titration-review')?.hook).toBe('patient-view');
    expect(CDS_SERVICES).toHaveLength(3);
  });

  it('asks patient-view for every kind of active order, and the order services for what they read', () => {
    // cds-hooks.md §4b: patient-view has no draft; the active oxygen order comes from the record, as a
    // MedicationRequest, ServiceRequest or DeviceRequest (status=active).
    const keysOf = (id: string) => Object.keys(findService(id)?.prefetch ?? {});
    expect(keysOf('oxygen-titration-review')).toStrictEqual([
      'patient', 'observations', 'conditions', 'encounter', 'medicationRequests', 'serviceRequests', 'deviceRequests',
    ]);
    expect(keysOf('oxygen-order-sign')).toStrictEqual([
      'patient', 'observations', 'conditions', 'encounter', 'medicationRequests', 'serviceRequests',
    ]);
    expect(PREFETCH_KEYS.deviceRequests.template).toBe('DeviceRequest?patient={{context.patientId}}&status=active');
  });
});

describe('expandPrefetchTemplate', () => {
  it.each([
    ['Patient/{{context.patientId}}', 'Patient/lb-pt-0001'],
    ['Encounter/{{context.encounterId}}', 'Encounter/lb-enc-0001'],
    ['{{context.userId}}', 'Practitioner/lb-dr-0042'], // CDS Hooks 2.0 #prefetch-tokens: userId template is a read
    ['Practitioner/{{userPractitionerId}}', 'Practitioner/lb-dr-0042'],
    [PREFETCH_KEYS.serviceRequests.template, 'ServiceRequest?patient=lb-pt-0001&status=active&code=http://snomed.info/sct|57485005'],
  ])('expands %s', (template, expected) => {
    expect(expandPrefetchTemplate(template, context)).toBe(expected);
  });

  describe('edge cases', () => {
    it('returns undefined when a token has no value in the context', () => {
      const { encounterId: _e, ...noEncounter } = context;
      expect(expandPrefetchTemplate(PREFETCH_KEYS.encounter.template, noEncounter)).toBeUndefined();
      expect(expandPrefetchTemplate('PractitionerRole/{{userPractitionerRoleId}}', context)).toBeUndefined();
    });

    it('refuses values that are not FHIR ids, so nothing sent can rewrite the query', () => {
      const hostile = { ...context, patientId: 'lb-pt-0001&_include=*' };
      expect(expandPrefetchTemplate(PREFETCH_KEYS.conditions.template, hostile)).toBeUndefined();
      expect(expandPrefetchTemplate('{{context.userId}}', { ...context, userId: '../admin' })).toBeUndefined();
    });

    it('returns undefined for a token it does not know', () => {
      expect(expandPrefetchTemplate('Patient/{{context.draftOrders.id}}', context)).toBeUndefined();
    });
  });
});
