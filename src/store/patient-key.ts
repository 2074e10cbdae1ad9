import { createHmac, randomBytes } from 'node:crypto';
import { closeSync, fsyncSync, linkSync, openSync, readFileSync, rmSync, statSync, writeSync } from 'node:fs';
import { join } from 'node:path';

/**
 * The pseudonymous patient key of the audit trail. It is keyed (HMAC-SHA256 with a local secret)
 * rather than a plain hash because patient ids are guessable: an MRN is a short number, so anyone
 * holding the store could hash every possible MRN and read the patients back out of a plain hash.
 * Without the secret the key links one patient's advisories and names nobody.
 */

/** Bytes a secret must hold at least: RFC 2104 §3 discourages HMAC keys shorter than the hash output (32 bytes for SHA-256). */
export const MIN_SECRET_BYTES = 32;

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

function code(error: unknown): string | undefined {
  return typeof error === 'object' && error !== null && 'code' in error && typeof error.code === 'string'
    ? error.code
    : undefined;
}

/** The secret is the file's bytes, trailing whitespace (an editor's newline) left off. */
function readSecret(file: string): Buffer {
  return Buffer.from(readFileSync(file).toString('latin1').trimEnd(), 'latin1');
}

function checkSecretFile(file: string, origin: string): SecretResult {
  let mode: number;
  try {
    mode = statSync(file).mode;
  } catch (error) {
    return { kind: 'refused', problem: `the patient-key secret ${file} (${origin}) cannot be read (${code(error) ?? 'error'})` };
  }
  if ((mode & 0o077) !== 0) {
    return {
      kind: 'refused',
      problem: `the patient-key secret ${file} (${origin}) is readable or writable by group or others (mode ${(mode & 0o777).toString(8)}); run chmod 600 on it`,
    };
  }
  const secret = readSecret(file);
  if (secret.length < MIN_SECRET_BYTES) {
    return {
      kind: 'refused',
      problem: `the patient-key secret ${file} (${origin}) holds ${String(secret.length)} bytes; it needs at least ${String(MIN_SECRET_BYTES)} random bytes`,
    };
  }
  return { kind: 'loaded', secret, file, created: false };
}

/**
 * Loads the patient-key secret: the configured file when there is one (refused when missing, short or
 * open to group or others), or `<dataDir>/patient-key.secret`, created owner-only with 32 random bytes
 * (hex) on first start and reused afterwards. The secret is written whole to a private temporary
 * file (`wx`, 0600) and then linked into place, which fails if the file exists: when two processes
 * start at once exactly one secret wins, and nobody ever reads a half-written one. Expects the data
 * directory to exist (openStore creates it).
 */
export function loadOrCreateSecret(options: LoadSecretOptions): SecretResult {
  if (options.secretFile !== undefined) {
    return checkSecretFile(options.secretFile, 'configured');
  }
  const file = join(options.dataDir, SECRET_FILE_NAME);
  const temporary = `${file}.${randomBytes(6).toString('hex')}.tmp`;
  try {
    writeDurably(temporary, `${randomBytes(32).toString('hex')}\n`);
    linkSync(temporary, file);
    syncDirectory(options.dataDir);
    return { kind: 'loaded', secret: readSecret(file), file, created: true };
  } catch (error) {
    if (code(error) !== 'EEXIST') {
      return {
        kind: 'refused',
        problem: `the patient-key secret ${file} cannot be created (${code(error) ?? 'error'}); check that the data directory is writable`,
      };
    }
  } finally {
    rmSync(temporary, { force: true });
  }
  return checkSecretFile(file, 'in the data directory');
}

/** Creates `file` owner-only and fsyncs it: the store's keys are only as lasting as their secret. */
function writeDurably(file: string, text: string): void {
  const fd = openSync(file, 'wx', 0o600);
  try {
    writeSync(fd, text);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

/** Makes the new directory entry itself survive a power loss (POSIX fsync(2) on the directory). */
function syncDirectory(dir: string): void {
  const fd = openSync(dir, 'r');
  try {
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

function lengthPrefixed(text: string): Buffer {
  const bytes = Buffer.from(text, 'utf8');
  const length = Buffer.alloc(4);
  length.writeUInt32BE(bytes.length);
  return Buffer.concat([length, bytes]);
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
  return createHmac('sha256', secret)
    .update(lengthPrefixed(server))
    .update(lengthPrefixed(patient.patientId))
    .digest('hex')
    .slice(0, 32);
}
