import type { Request } from 'express';
import { describe, expect, it } from 'vitest';
import { createProductionAuthenticator } from '../../src/security/production-authenticator.js';
import type { VerifyToken } from '../../src/security/jwt-verifier.js';
import { trustOf, ehrClient, EHR_ISS, PUBLIC_BASE } from './support/fixtures.js';

/** A verifier stand-in that records what it was asked, so the mapping alone is under test. */
function recordingVerifier(outcome: Awaited<ReturnType<VerifyToken>>) {
  const asked: [string, string][] = [];
  const verify: VerifyToken = (token, audience) => {
    asked.push([token, audience]);
    return Promise.resolve(outcome);
  };
  return { asked, verify };
}

const client = trustOf([ehrClient({ fhirServers: ['https://fhir.larkspur-bay.example/r4'] })]).clients.get(EHR_ISS);
if (client === undefined) throw new Error('fixture client missing');

const req = (authorization: string | undefined, originalUrl: string) =>
  ({ headers: authorization === undefined ? {} : { authorization }, originalUrl }) as unknown as Request;

describe('createProductionAuthenticator', () => {
  it('asks the verifier with the audience of the path called and passes the client on', async () => {
    const verifier = recordingVerifier({
      kind: 'verified',
      client,
      alg: 'ES384',
      claims: { expS: 2, iatS: 1, jti: 'j', tenant: 'north-campus' },
    });
    const authenticate = createProductionAuthenticator({ verify: verifier.verify, publicBaseUrl: PUBLIC_BASE, requireHttpsFhirServers: true });
    const result = await authenticate(req('Bearer abc.def.ghi', '/cds-services/oxygen-order-sign/feedback?x=1'));
    // CDS Hooks 2.0 §Trusting CDS Clients: aud is the URL of the endpoint invoked
    expect(verifier.asked).toStrictEqual([['abc.def.ghi', `${PUBLIC_BASE}/cds-services/oxygen-order-sign/feedback`]]);
    expect(result).toStrictEqual({
      kind: 'allowed',
      client: EHR_ISS,
      iss: EHR_ISS,
      tenant: 'north-campus',
      fhirServers: { kind: 'listed', servers: ['https://fhir.larkspur-bay.example/r4'], requireHttps: true },
    });
  });

  it('turns a refusal into invalid-token with the reason and labels for the log', async () => {
    const verifier = recordingVerifier({ kind: 'refused', reason: 'expired', labels: { iss: EHR_ISS, jti: 'j-1' } });
    const authenticate = createProductionAuthenticator({ verify: verifier.verify, publicBaseUrl: PUBLIC_BASE, requireHttpsFhirServers: true });
    expect(await authenticate(req('Bearer abc.def.ghi', '/cds-services'))).toStrictEqual({
      kind: 'denied',
      reason: 'invalid-token',
      detail: { reason: 'expired', iss: EHR_ISS, jti: 'j-1' },
    });
  });

  describe('edge cases', () => {
    it('does not call the verifier without a usable Bearer token', async () => {
      const verifier = recordingVerifier({ kind: 'refused', reason: 'malformed', labels: {} });
      const authenticate = createProductionAuthenticator({ verify: verifier.verify, publicBaseUrl: PUBLIC_BASE, requireHttpsFhirServers: true });
      expect(await authenticate(req(undefined, '/cds-services'))).toStrictEqual({ kind: 'denied', reason: 'missing', detail: { reason: 'no-bearer-token' } });
      expect(await authenticate(req('Bearer a b', '/cds-services'))).toStrictEqual({ kind: 'denied', reason: 'invalid-token', detail: { reason: 'malformed' } });
      expect(verifier.asked).toStrictEqual([]);
    });
  });
});
