import { chmodSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseReviewConfig, type ReviewConfig } from '../../src/config/review-config.js';
import { checkReviewLinkToken } from '../../src/security/review-link-token.js';
import { setUpReviewAccess } from '../../src/security/setup-review-access.js';
import { useTempDirs } from '../store/support/temp-dir.js';

const NOW = new Date('2026-03-14T12:00:00Z');
const CARD = '00000000-0000-4000-8000-000000000001';

describe('setUpReviewAccess', () => {
  const tempDir = useTempDirs();
  function config(env: Record<string, string>, cwd: string, mode: 'demo' | 'production'): ReviewConfig {
    const parsed = parseReviewConfig(env, cwd, mode, cwd);
    if (parsed.kind !== 'ok') {
      throw new Error(JSON.stringify(parsed.problems));
    }
    return parsed.config;
  }

  it('leaves the demo open and links cards to the address the server listens on', () => {
    const dir = tempDir();
    const setup = setUpReviewAccess({ mode: 'demo', config: config({}, dir, 'demo'), clock: () => NOW });
    expect(setup.kind).toBe('ready');
    if (setup.kind === 'ready') {
      setup.setListeningUrl('http://127.0.0.1:43121');
      expect(setup.review.access).toStrictEqual({ mode: 'demo' });
      expect(setup.review.linkFor?.(CARD)).toBe(`http://127.0.0.1:43121/review/advisories/${CARD}`);
    }
  });

  it('in production creates the link secret in the data directory and signs links against the public URL', () => {
    const dir = tempDir();
    const env = { OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: 'X-Authenticated-User', OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: '10.20.0.5' };
    const setup = setUpReviewAccess({ mode: 'production', config: config(env, dir, 'production'), publicUrl: 'https://cds.larkspur-bay.example', clock: () => NOW });
    expect(setup.kind).toBe('ready');
    if (setup.kind !== 'ready' || setup.review.access.mode !== 'production') {
      return;
    }
    expect(setup.review.access.identityHeader).toBe('x-authenticated-user');
    expect(setup.summary['reviewLinkSecretCreated']).toBe(true);
    const url = new URL(setup.review.linkFor?.(CARD) ?? '');
    expect(url.origin).toBe('https://cds.larkspur-bay.example');
    const check = checkReviewLinkToken(setup.review.access.linkSecret, url.searchParams.get('token') ?? '', CARD, NOW.getTime());
    // The default lifetime: one day (docs/security.md, "Review pages").
    expect(check).toStrictEqual({ kind: 'valid', exp: NOW.getTime() / 1000 + 86_400 });
    expect(JSON.stringify(setup.summary)).not.toContain(setup.review.access.linkSecret.toString());
  });

  it('refuses to start with a configured secret file that others may read', () => {
    const dir = tempDir();
    const file = join(dir, 'review.key');
    writeFileSync(file, 'k'.repeat(48), { mode: 0o600 });
    chmodSync(file, 0o640);
    const setup = setUpReviewAccess({
      mode: 'production',
      config: config({ OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE: file }, dir, 'production'),
      publicUrl: 'https://cds.larkspur-bay.example',
      clock: () => NOW,
    });
    expect(setup.kind === 'refused' && setup.problems).toMatch(/^OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE: .*chmod 600/);
  });
});
