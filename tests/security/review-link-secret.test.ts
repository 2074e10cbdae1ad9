import { chmodSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadReviewLinkSecret, MIN_SECRET_BYTES } from '../../src/security/review-link-secret.js';
import { useTempDirs } from '../store/support/temp-dir.js';

describe('loadReviewLinkSecret', () => {
  const tempDir = useTempDirs();

  it('creates an owner-only secret in a new data directory on first start and reuses it after', () => {
    const file = join(tempDir(), 'data', 'review-link.secret');
    const first = loadReviewLinkSecret(file, { create: true });
    expect(first.kind === 'loaded' && first.created).toBe(true);
    expect(statSync(file).mode & 0o777).toBe(0o600);
    expect(statSync(join(file, '..')).mode & 0o777).toBe(0o700);
    const second = loadReviewLinkSecret(file, { create: true });
    expect(second.kind === 'loaded' && second.created).toBe(false);
    expect(first.kind === 'loaded' && second.kind === 'loaded' && first.secret.equals(second.secret)).toBe(true);
    // 32 random bytes, hex (RFC 2104 §3: at least the hash length).
    expect(readFileSync(file, 'utf8')).toMatch(/^[0-9a-f]{64}\n$/);
  });

  it('uses a configured file as it is, and never creates one', () => {
    const dir = tempDir();
    const file = join(dir, 'given.key');
    writeFileSync(file, `${'k'.repeat(40)}\n`, { mode: 0o600 });
    const loaded = loadReviewLinkSecret(file, { create: false });
    expect(loaded.kind === 'loaded' && loaded.secret.toString()).toBe('k'.repeat(40));
    expect(loadReviewLinkSecret(join(dir, 'missing.key'), { create: false }).kind).toBe('refused');
  });

  it('refuses a secret others may read, or one shorter than 32 bytes', () => {
    const dir = tempDir();
    const open = join(dir, 'open.key');
    writeFileSync(open, 'k'.repeat(40), { mode: 0o600 });
    chmodSync(open, 0o644);
    const refusedOpen = loadReviewLinkSecret(open, { create: false });
    expect(refusedOpen.kind === 'refused' && refusedOpen.problem).toContain('chmod 600');
    const short = join(dir, 'short.key');
    writeFileSync(short, 'k'.repeat(MIN_SECRET_BYTES - 1), { mode: 0o600 });
    expect(loadReviewLinkSecret(short, { create: false }).kind).toBe('refused');
  });
});
