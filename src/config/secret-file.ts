import { randomBytes } from 'node:crypto';
import { closeSync, fsyncSync, linkSync, mkdirSync, openSync, readFileSync, rmSync, statSync, writeSync } from 'node:fs';
import { dirname } from 'node:path';

/**
 * A local secret kept in a file owner-only: the patient-key secret (src/store/patient-key.ts) and the
 * review link secret (src/security/review-link-secret.ts). A configured file is used as it is; a
 * missing one in the data directory is created with 32 random bytes (hex). The new secret is written
 * whole to a private temporary file (`wx`, 0600) and then linked into place, which fails if the file
 * exists: when two processes start at once exactly one secret wins, and nobody ever reads half of one.
 */

/** RFC 2104 §3 discourages HMAC keys shorter than the hash output: 32 bytes for SHA-256. */
export const MIN_SECRET_BYTES = 32;

export type SecretFileLoad =
  | { readonly kind: 'loaded'; readonly secret: Buffer; readonly created: boolean }
  /** The service must not start: `problem` says why and what to do. */
  | { readonly kind: 'refused'; readonly problem: string };

function code(error: unknown): string | undefined {
  return typeof error === 'object' && error !== null && 'code' in error && typeof error.code === 'string'
    ? error.code
    : undefined;
}

/** The secret is the file's bytes, trailing whitespace (an editor's newline) left off. */
function readSecret(file: string): Buffer {
  return Buffer.from(readFileSync(file).toString('latin1').trimEnd(), 'latin1');
}

/**
 * Reads an existing secret, refused when missing, open to group or others, or shorter than
 * MIN_SECRET_BYTES. `named` is how problems name the file, e.g. "the review link secret /x/y".
 */
export function readSecretFile(file: string, named: string): SecretFileLoad {
  let mode: number;
  try {
    mode = statSync(file).mode;
  } catch (error) {
    return { kind: 'refused', problem: `${named} cannot be read (${code(error) ?? 'error'})` };
  }
  if ((mode & 0o077) !== 0) {
    return {
      kind: 'refused',
      problem: `${named} is readable or writable by group or others (mode ${(mode & 0o777).toString(8)}); run chmod 600 on it`,
    };
  }
  const secret = readSecret(file);
  if (secret.length < MIN_SECRET_BYTES) {
    return {
      kind: 'refused',
      problem: `${named} holds ${String(secret.length)} bytes; it needs at least ${String(MIN_SECRET_BYTES)} random bytes`,
    };
  }
  return { kind: 'loaded', secret, created: false };
}

/** Creates `file` owner-only and fsyncs it: what a secret keys is only as lasting as the secret. */
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

/**
 * Creates the secret in `file` (its directory made 0700 if missing) unless it exists, then reads it.
 * `named` names the file in problems; `namedExisting` names it when an existing file is refused.
 */
export function createOrReadSecretFile(file: string, named: string, namedExisting = named): SecretFileLoad {
  const temporary = `${file}.${randomBytes(6).toString('hex')}.tmp`;
  try {
    mkdirSync(dirname(file), { recursive: true, mode: 0o700 });
    writeDurably(temporary, `${randomBytes(32).toString('hex')}\n`);
    linkSync(temporary, file);
    syncDirectory(dirname(file));
    return { kind: 'loaded', secret: readSecret(file), created: true };
  } catch (error) {
    if (code(error) !== 'EEXIST') {
      return {
        kind: 'refused',
        problem: `${named} cannot be created (${code(error) ?? 'error'}); check that the data directory is writable`,
      };
    }
  } finally {
    rmSync(temporary, { force: true });
  }
  return readSecretFile(file, namedExisting);
}
