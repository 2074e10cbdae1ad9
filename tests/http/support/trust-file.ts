import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { EHR_ES384, EHR_ISS } from '../../security/support/fixtures.js';

/** A trust file naming the invented Larkspur Bay EHR client with its ES384 key and FHIR server. */
export function larkspurTrustYaml(): string {
  return [
    'clients:',
    `  - iss: ${EHR_ISS}`,
    `    jwks: { keys: [${JSON.stringify(EHR_ES384.publicJwk)}] }`,
    '    fhirServers: [ https://fhir.larkspur-bay.example/r4 ]',
    '',
  ].join('\n');
}

/** Writes `larkspurTrustYaml()` to `dir/trust.yaml`; returns its path. */
export function writeLarkspurTrustFile(dir: string): string {
  const path = join(dir, 'trust.yaml');
  writeFileSync(path, larkspurTrustYaml());
  return path;
}
