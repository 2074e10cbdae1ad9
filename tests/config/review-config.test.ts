import { describe, expect, it } from 'vitest';
import { parseReviewConfig, REVIEW_DEFAULTS } from '../../src/config/review-config.js';

const CWD = '/srv/o2check';
// As env-config.ts resolves the default O2CHECK_DATA_DIR (`./data`) against the working directory.
const DATA_DIR = '/srv/o2check/data';

function problems(env: Record<string, string>, mode: 'demo' | 'production' = 'production'): string[] {
  const parsed = parseReviewConfig(env, CWD, mode, DATA_DIR);
  return parsed.kind === 'invalid' ? parsed.problems.map((p) => p.variable) : [];
}

describe('parseReviewConfig', () => {
  it('defaults to a one-day link and the data directory secret, created on first start', () => {
    expect(parseReviewConfig({}, CWD, 'production', DATA_DIR)).toStrictEqual({
      kind: 'ok',
      config: { proxyAddresses: [], linkTtlS: 86_400, linkSecretPath: '/srv/o2check/data/review-link.secret', createLinkSecret: true },
    });
    expect(REVIEW_DEFAULTS.O2CHECK_REVIEW_LINK_TTL_S).toBe(86_400);
  });

  it('reads the proxy header (lower-cased), exact addresses, the link lifetime and a secret file', () => {
    const parsed = parseReviewConfig(
      {
        O2CHECK_REVIEW_IDENTITY_HEADER: 'X-Authenticated-User',
        O2CHECK_REVIEW_PROXY_ADDRESSES: '10.20.0.5, ::ffff:10.20.0.6,2001:db8::7',
        O2CHECK_REVIEW_LINK_TTL_S: '3600',
        O2CHECK_REVIEW_LINK_SECRET_FILE: 'secrets/review.key',
      },
      CWD,
      'production',
      '/var/lib/o2check',
    );
    expect(parsed).toStrictEqual({
      kind: 'ok',
      config: {
        identityHeader: 'x-authenticated-user',
        proxyAddresses: ['10.20.0.5', '10.20.0.6', '2001:db8::7'],
        linkTtlS: 3600,
        linkSecretPath: '/srv/o2check/secrets/review.key',
        createLinkSecret: false,
      },
    });
  });

  it('puts the secret in the data directory (O2CHECK_DATA_DIR) when no file is configured', () => {
    const parsed = parseReviewConfig({}, CWD, 'production', '/var/lib/o2check');
    expect(parsed.kind === 'ok' && parsed.config.linkSecretPath).toBe('/var/lib/o2check/review-link.secret');
  });

  it.each([
    [{ O2CHECK_REVIEW_IDENTITY_HEADER: 'X-User', O2CHECK_REVIEW_PROXY_ADDRESSES: 'proxy.larkspur-bay.example' }, ['O2CHECK_REVIEW_PROXY_ADDRESSES']],
    [{ O2CHECK_REVIEW_IDENTITY_HEADER: 'X-User', O2CHECK_REVIEW_PROXY_ADDRESSES: '10.0.0.0/8' }, ['O2CHECK_REVIEW_PROXY_ADDRESSES']],
    [{ O2CHECK_REVIEW_IDENTITY_HEADER: 'Authorization', O2CHECK_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['O2CHECK_REVIEW_IDENTITY_HEADER']],
    [{ O2CHECK_REVIEW_IDENTITY_HEADER: 'X-Forwarded-For', O2CHECK_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['O2CHECK_REVIEW_IDENTITY_HEADER']],
    [{ O2CHECK_REVIEW_IDENTITY_HEADER: 'X User', O2CHECK_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['O2CHECK_REVIEW_IDENTITY_HEADER']],
    [{ O2CHECK_REVIEW_IDENTITY_HEADER: 'X-User' }, ['O2CHECK_REVIEW_PROXY_ADDRESSES']],
    [{ O2CHECK_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['O2CHECK_REVIEW_IDENTITY_HEADER']],
    [{ O2CHECK_REVIEW_LINK_TTL_S: '30' }, ['O2CHECK_REVIEW_LINK_TTL_S']],
    [{ O2CHECK_REVIEW_LINK_TTL_S: '2592000' }, ['O2CHECK_REVIEW_LINK_TTL_S']],
    [{ O2CHECK_REVIEW_LINK_TTL_S: '1h' }, ['O2CHECK_REVIEW_LINK_TTL_S']],
  ])('names the variable at fault: %j', (env, variables) => {
    expect(problems(env)).toStrictEqual(variables);
  });

  it('refuses proxy settings in demo mode, where the pages are open anyway', () => {
    expect(problems({ O2CHECK_REVIEW_IDENTITY_HEADER: 'X-User', O2CHECK_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, 'demo')).toStrictEqual([
      'O2CHECK_REVIEW_IDENTITY_HEADER',
      'O2CHECK_REVIEW_PROXY_ADDRESSES',
    ]);
  });
});
