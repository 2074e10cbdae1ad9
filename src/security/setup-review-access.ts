import type { Mode } from '../config/env-config.js';
import type { ReviewConfig } from '../config/review-config.js';
import type { ReviewAppDeps } from '../http/app.js';
import type { ReviewAccessConfig } from './review-access.js';
import { loadReviewLinkSecret } from './review-link-secret.js';
import { createReviewLinker } from './review-link-token.js';

/**
 * Builds the review pages' access and the cards' review links at start-up, as setUpAuthentication
 * does for the hook routes. Production loads (or creates) the link secret and signs every link
 * against `OXYGEN_CHECKER_PUBLIC_URL`; the loopback demo leaves the pages open and links to the address the
 * server actually listens on, known only once it listens (`setListeningUrl`).
 */
export type ReviewSetup =
  | {
      readonly kind: 'ready';
      readonly review: ReviewAppDeps;
      /** The demo's links use this base; call it with the listening URL before serving. */
      readonly setListeningUrl: (url: string) => void;
      /** For the start-up log line: how review access is set up, no secrets. */
      readonly summary: Readonly<Record<string, unknown>>;
    }
  | { readonly kind: 'refused'; readonly problems: string };

export interface ReviewSetupInput {
  readonly mode: Mode;
  readonly config: ReviewConfig;
  /** `OXYGEN_CHECKER_PUBLIC_URL`, normalised; required in production. */
  readonly publicUrl?: string;
  readonly clock: () => Date;
}

export function setUpReviewAccess(input: ReviewSetupInput): ReviewSetup {
  if (input.mode === 'demo') {
    let base = '';
    return {
      kind: 'ready',
      review: { access: { mode: 'demo' }, linkFor: createReviewLinker({ baseUrl: () => base }) },
      setListeningUrl: (url) => {
        base = url.replace(/\/+$/, '');
      },
      summary: { reviewAccess: 'open (loopback demo)' },
    };
  }
  if (input.publicUrl === undefined || input.publicUrl === '') {
    return { kind: 'refused', problems: 'OXYGEN_CHECKER_PUBLIC_URL: production review links need the public base URL' };
  }
  const { config } = input;
  const loaded = loadReviewLinkSecret(config.linkSecretPath, { create: config.createLinkSecret });
  if (loaded.kind === 'refused') {
    return { kind: 'refused', problems: `OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE: ${loaded.problem}` };
  }
  const access: ReviewAccessConfig = {
    mode: 'production',
    ...(config.identityHeader === undefined ? {} : { identityHeader: config.identityHeader }),
    proxyAddresses: config.proxyAddresses,
    linkSecret: loaded.secret,
  };
  const publicUrl = input.publicUrl;
  return {
    kind: 'ready',
    review: {
      access,
      linkFor: createReviewLinker({ baseUrl: () => publicUrl, signing: { secret: loaded.secret, ttlS: config.linkTtlS, clock: input.clock } }),
    },
    setListeningUrl: () => undefined,
    summary: {
      reviewAccess: config.identityHeader === undefined ? 'card links only (no sign-in proxy configured)' : 'sign-in proxy and card links',
      ...(config.identityHeader === undefined ? {} : { reviewIdentityHeader: config.identityHeader, reviewProxyAddresses: [...config.proxyAddresses] }),
      reviewLinkTtlS: config.linkTtlS,
      reviewLinkSecretCreated: loaded.created,
    },
  };
}
