import { describe, expect, it } from 'vitest';
import { explainRefusal, limitFhirAccess } from '../../src/http/fhir-server-access.js';
import type { FhirServerPolicy } from '../../src/security/fhir-server-allowlist.js';
import { fhirAuthorization } from './larkspur-fixtures.js';

const policy: FhirServerPolicy = { kind: 'listed', servers: ['https://fhir.larkspur-bay.example/r4'], requireHttps: true };
const context = { patientId: 'lb-pt-0417' };

describe('limitFhirAccess', () => {
  it('leaves a request naming an allowed fhirServer as it is', () => {
    const request = { context, fhirServer: 'https://fhir.larkspur-bay.example/r4', fhirAuthorization };
    expect(limitFhirAccess(request, policy)).toStrictEqual({ request, refused: undefined });
  });

  it('drops fhirServer and fhirAuthorization when the server is refused', () => {
    const request = { context, fhirServer: 'https://fhir.attacker.example/r4', fhirAuthorization, prefetch: {} };
    expect(limitFhirAccess(request, policy)).toStrictEqual({
      request: { context, fhirServer: undefined, fhirAuthorization: undefined, prefetch: {} },
      refused: 'not-listed',
    });
  });

  it('has nothing to decide without a fhirServer', () => {
    const request = { context };
    expect(limitFhirAccess(request, policy)).toStrictEqual({ request, refused: undefined });
  });

  describe('edge cases', () => {
    it('rewrites the no-access reason of a 412 to name the refusal', () => {
      expect(
        explainRefusal(
          [
            { key: 'observations', reason: 'was not prefetched, and the request gave no FHIR server access (fhirServer with fhirAuthorization)' },
            { key: 'conditions', reason: 'was unusable: it holds no Condition' },
          ],
          'not-https',
        ),
      ).toStrictEqual([
        {
          key: 'observations',
          reason: 'was not prefetched, and the fhirServer in the request is not allowed for this client (it does not use https), so it was not called',
        },
        {
          key: 'conditions',
          reason: 'was unusable: it holds no Condition; the fhirServer in the request is not allowed for this client (it does not use https), so it was not called',
        },
      ]);
    });
  });
});
