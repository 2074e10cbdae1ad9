import { describe, expect, it } from 'vitest';
import { parseReviewConfig, REVIEW_DEFAULTS } from '../../src/config/review-config.js';

const CWD = '/srv/oxygen-order-checker';
// As env-config.ts resolves the default OXYGEN_CHECKER_DATA_DIR (`./data`) against the working directory.
const DATA_DIR = '/srv/oxygen-order-checker/data';

function problems(env: Record<string, string>, mode: 'demo' | 'production' = 'production'): string[] {
  const parsed = parseReviewConfig(env, CWD, mode, DATA_DIR);
  return parsed.kind === 'invalid' ? parsed.problems.map((p) => p.variable) : [];
}

describe('parseReviewConfig', () => {
  it('defaults to a one-day link and the data directory secret, created on first start', () => {
    expect(parseReviewConfig({}, CWD, 'production', DATA_DIR)).toStrictEqual({
      kind: 'ok',
      config: { proxyAddresses: [], linkTtlS: 86_400, linkSecretPath: '/srv/oxygen-order-checker/data/review-link.secret', createLinkSecret: true },
    });
    expect(REVIEW_DEFAULTS.OXYGEN_CHECKER_REVIEW_LINK_TTL_S).toBe(86_400);
  });

  it('reads the proxy header (lower-cased), exact addresses, the link lifetime and a secret file', () => {
    const parsed = parseReviewConfig(
      {
        OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-Authenticated-User',
        OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.20.0.5, ::ffff:10.20.0.6,2001:db8::7',
        OXYGEN_CHECKER_REVIEW_LINK_TTL_S: '3600',
        OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE: 'secrets/review.key',
      },
      CWD,
      'production',
      '/var/lib/oxygen-order-checker',
    );
    expect(parsed).toStrictEqual({
      kind: 'ok',
      config: {
        identityHeader: 'x-authenticated-user',
        proxyAddresses: ['10.20.0.5', '10.20.0.6', '2001:db8::7'],
        linkTtlS: 3600,
        linkSecretPath: '/srv/oxygen-order-checker/secrets/review.key',
        createLinkSecret: false,
      },
    });
  });

  it('puts the secret in the data directory (OXYGEN_CHECKER_DATA_DIR) when no file is configured', () => {
    const parsed = parseReviewConfig({}, CWD, 'production', '/var/lib/oxygen-order-checker');
    expect(parsed.kind === 'ok' && parsed.config.linkSecretPath).toBe('/var/lib/oxygen-order-checker/review-link.secret');
  });

  it.each([
    [{ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-User', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: 'proxy.larkspur-bay.example' }, ['OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES']],
    [{ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-User', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.0.0.0/8' }, ['OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES']],
    [{ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'Authorization', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER']],
    [{ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-Forwarded-For', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER']],
    [{ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X User', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER']],
    [{ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-User' }, ['OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES']],
    [{ OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, ['OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER']],
    [{ OXYGEN_CHECKER_REVIEW_LINK_TTL_S: '30' }, ['OXYGEN_CHECKER_REVIEW_LINK_TTL_S']],
    [{ OXYGEN_CHECKER_REVIEW_LINK_TTL_S: '2592000' }, ['OXYGEN_CHECKER_REVIEW_LINK_TTL_S']],
    [{ OXYGEN_CHECKER_REVIEW_LINK_TTL_S: '1h' }, ['OXYGEN_CHECKER_REVIEW_LINK_TTL_S']],
  ])('names the variable at fault: %j', (env, variables) => {
    expect(problems(env)).toStrictEqual(variables);
  });

  it('refuses proxy settings in demo mode, where the pages are open anyway', () => {
    expect(problems({ OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-User', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.0.0.1' }, 'demo')).toStrictEqual([
      'OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER',
      'OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES',
    ]);
  });
});
