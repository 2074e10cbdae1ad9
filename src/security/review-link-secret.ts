import { randomBytes } from 'node:crypto';
import { mkdir, open, readFile, stat } from 'node:fs/promises';
import { dirname } from 'node:path';

/**
 * The key that signs review link tokens. A configured file is read as it is; otherwise a file in the
 * data directory is created on first start with 32 random bytes (hex) and owner-only permissions,
 * and read on every later start, so links survive a restart. Replacing the file invalidates every
 * link already issued (docs/security.md).
 */

/** HMAC-SHA256 keys should be at least the hash length (RFC 2104 §3): 32 bytes. */
export const MIN_SECRET_BYTES = 32;
const NEW_SECRET_BYTES = 32;

export type SecretLoad =
  | { readonly kind: 'ok'; readonly secret: Buffer; readonly created: boolean }
  | { readonly kind: 'invalid'; readonly message: string };

function code(error: unknown): string | undefined {
  return typeof error === 'object' && error !== null ? (error as { code?: string }).code : undefined;
}

async function readSecret(path: string): Promise<SecretLoad> {
  let info;
  try {
    info = await stat(path);
  } catch (error) {
    return { kind: 'invalid', message: `cannot read ${path} (${code(error) ?? 'error'})` };
  }
  // POSIX only: on Windows the mode bits do not describe who may read the file.
  if (process.platform !== 'win32' && (info.mode & 0o077) !== 0) {
    return { kind: 'invalid', message: `${path} may be read by other users; make it owner-only (chmod 600)` };
  }
  const secret = Buffer.from((await readFile(path, 'utf8')).trim(), 'utf8');
  if (secret.length < MIN_SECRET_BYTES) {
    return { kind: 'invalid', message: `${path} holds fewer than ${MIN_SECRET_BYTES} bytes; use a longer random secret` };
  }
  return { kind: 'ok', secret, created: false };
}

/** Reads `path`, creating it first (mode 0600, its directory 0700) when `create` is set and it is absent. */
export async function loadReviewLinkSecret(path: string, options: { readonly create: boolean }): Promise<SecretLoad> {
  if (options.create) {
    await mkdir(dirname(path), { recursive: true, mode: 0o700 });
    let handle;
    try {
      // `wx`: never overwrite; a second process starting at the same moment reads the first one's key.
      handle = await open(path, 'wx', 0o600);
    } catch (error) {
      if (code(error) !== 'EEXIST') {
        return { kind: 'invalid', message: `cannot create ${path} (${code(error) ?? 'error'})` };
      }
    }
    if (handle !== undefined) {
      try {
        await handle.writeFile(`${randomBytes(NEW_SECRET_BYTES).toString('hex')}\n`);
        await handle.sync();
      } finally {
        await handle.close();
      }
      const loaded = await readSecret(path);
      return loaded.kind === 'ok' ? { ...loaded, created: true } : loaded;
    }
  }
  return readSecret(path);
}
