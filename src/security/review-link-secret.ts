import { randomBytes } from 'node:crypto';
import { closeSync, fsyncSync, linkSync, mkdirSync, openSync, readFileSync, rmSync, statSync, writeSync } from 'node:fs';
import { dirname } from 'node:path';

/**
 * The key that signs review link tokens (review-link-token.ts). A configured file is used as it is;
 * otherwise `review-link.secret` in the data directory is created owner-only with 32 random bytes
 * (hex) on first start and reused afterwards, so links survive a restart. As for the patient-key
 * secret (src/store/patient-key.ts), the new secret is written whole to a private temporary file and
 * linked into place, which fails if the file exists: two processes starting at once agree on one
 * secret and nobody reads half of one. Replacing the file invalidates every link already issued.
 */

/** RFC 2104 §3 discourages HMAC keys shorter than the hash output: 32 bytes for SHA-256. */
export const MIN_SECRET_BYTES = 32;

export type SecretLoad =
  | { readonly kind: 'loaded'; readonly secret: Buffer; readonly created: boolean }
  | { readonly kind: 'refused'; readonly problem: string };

function code(error: unknown): string | undefined {
  return typeof error === 'object' && error !== null && 'code' in error && typeof error.code === 'string' ? error.code : undefined;
}

function checkSecretFile(file: string): SecretLoad {
  let mode: number;
  try {
    mode = statSync(file).mode;
  } catch (error) {
    return { kind: 'refused', problem: `the review link secret ${file} cannot be read (${code(error) ?? 'error'})` };
  }
  if ((mode & 0o077) !== 0) {
    return {
      kind: 'refused',
      problem: `the review link secret ${file} is readable or writable by group or others (mode ${(mode & 0o777).toString(8)}); run chmod 600 on it`,
    };
  }
  const secret = Buffer.from(readFileSync(file).toString('latin1').trimEnd(), 'latin1');
  if (secret.length < MIN_SECRET_BYTES) {
    return { kind: 'refused', problem: `the review link secret ${file} holds ${secret.length} bytes; it needs at least ${MIN_SECRET_BYTES} random bytes` };
  }
  return { kind: 'loaded', secret, created: false };
}

function writeDurably(file: string, text: string): void {
  const fd = openSync(file, 'wx', 0o600);
  try {
    writeSync(fd, text);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

/** Loads `file`; when `create` is set and it does not exist yet, creates it first (directory 0700). */
export function loadReviewLinkSecret(file: string, options: { readonly create: boolean }): SecretLoad {
  if (!options.create) {
    return checkSecretFile(file);
  }
  const temporary = `${file}.${randomBytes(6).toString('hex')}.tmp`;
  try {
    mkdirSync(dirname(file), { recursive: true, mode: 0o700 });
    writeDurably(temporary, `${randomBytes(32).toString('hex')}\n`);
    linkSync(temporary, file);
    const loaded = checkSecretFile(file);
    return loaded.kind === 'loaded' ? { ...loaded, created: true } : loaded;
  } catch (error) {
    if (code(error) !== 'EEXIST') {
      return { kind: 'refused', problem: `the review link secret ${file} cannot be created (${code(error) ?? 'error'}); check that the data directory is writable` };
    }
  } finally {
    rmSync(temporary, { force: true });
  }
  return checkSecretFile(file);
}
