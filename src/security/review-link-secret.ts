import { createOrReadSecretFile, readSecretFile, type SecretFileLoad } from '../config/secret-file.js';

/**
 * The key that signs review link tokens (review-link-token.ts). A configured file is used as it is;
 * otherwise `review-link.secret` in the data directory is created owner-only with 32 random bytes
 * (hex) on first start and reused afterwards, so links survive a restart, written as the
 * patient-key secret is (src/config/secret-file.ts). Replacing the file invalidates every link
 * already issued.
 */

export { MIN_SECRET_BYTES } from '../config/secret-file.js';

export type SecretLoad = SecretFileLoad;

/** Loads `file`; when `create` is set and it does not exist yet, creates it first (directory 0700). */
export function loadReviewLinkSecret(file: string, options: { readonly create: boolean }): SecretLoad {
  const named = `the review link secret ${file}`;
  return options.create ? createOrReadSecretFile(file, named) : readSecretFile(file, named);
}
