import { createHmac } from 'node:crypto';
import { join } from 'node:path';
import { createOrReadSecretFile, readSecretFile } from '../config/secret-file.js';

/**
 * The pseudonymous patient key of the audit trail. It is keyed (HMAC-SHA256 with a local secret)
 * rather than a plain hash because patient ids are guessable: an MRN is a short number, so anyone
 * holding the store could hash every possible MRN and read the patients back out of a plain hash.
 * Without the secret the key links one patient's advisories and names nobody.
 */

export { MIN_SECRET_BYTES } from '../config/secret-file.js';

/** The secret's file name in the data directory when none is configured. */
export const SECRET_FILE_NAME = 'patient-key.secret';

export type SecretResult =
  | { readonly kind: 'loaded'; readonly secret: Buffer; readonly file: string; readonly created: boolean }
  /** The service must not start: `problem` says why and what to do. */
  | { readonly kind: 'refused'; readonly problem: string };

export interface LoadSecretOptions {
  readonly dataDir: string;
  /** A secret file the operator provides; used as is, never created. */
  readonly secretFile?: string;
}

/**
 * Loads the patient-key secret: the configured file when there is one (refused when missing, short or
 * open to group or others), or `<dataDir>/patient-key.secret`, created owner-only with 32 random bytes
 * (hex) on first start and reused afterwards (src/config/secret-file.ts says how it is written).
 */
export function loadOrCreateSecret(options: LoadSecretOptions): SecretResult {
  if (options.secretFile !== undefined) {
    const loaded = readSecretFile(options.secretFile, `the patient-key secret ${options.secretFile} (configured)`);
    return loaded.kind === 'loaded' ? { ...loaded, file: options.secretFile } : loaded;
  }
  const file = join(options.dataDir, SECRET_FILE_NAME);
  const loaded = createOrReadSecretFile(file, `the patient-key secret ${file}`, `the patient-key secret ${file} (in the data directory)`);
  return loaded.kind === 'loaded' ? { ...loaded, file } : loaded;
}

/** A text's length in UTF-8 bytes, as the 4 big-endian bytes that go before it in the MAC. */
function lengthPrefix(text: string): Buffer {
  const prefix = Buffer.alloc(4);
  prefix.writeUInt32BE(Buffer.byteLength(text, 'utf8'));
  return prefix;
}

export interface PatientRef {
  /** The FHIR server the patient id belongs to; ids are only unique within one server. */
  readonly fhirServer?: string;
  readonly patientId: string;
}

/**
 * The patient's key: HMAC-SHA256 over the length-prefixed FHIR server base (trailing slashes left
 * off, so `…/r4` and `…/r4/` agree) and patient id, as 32 hex characters (128 bits: no collision
 * among any realistic number of patients). Length prefixes keep ("ab", "c") apart from ("a", "bc").
 */
export function patientKey(secret: Buffer, patient: PatientRef): string {
  const server = (patient.fhirServer ?? '').replace(/\/+$/, '');
  // Each text goes into the MAC as it is, after its length: no buffer is built to join them.
  return createHmac('sha256', secret)
    .update(lengthPrefix(server))
    .update(server, 'utf8')
    .update(lengthPrefix(patient.patientId))
    .update(patient.patientId, 'utf8')
    .digest('hex')
    .slice(0, 32);
}
