import { afterEach } from 'vitest';
import { openStore } from '../../../src/store/open-store.js';
import type { ReviewAccessConfig } from '../../../src/security/review-access.js';
import type { Store } from '../../../src/store/store.js';
import { useTempDirs } from '../../store/support/temp-dir.js';
import { buildTestApp, type TestApp } from '../test-app.js';

/** The clock of the review tests: the day after the store fixtures' advisories (2026-03-14). */
export const REVIEW_NOW = new Date('2026-03-14T12:00:00Z');

export const LINK_SECRET = Buffer.from('a-review-link-secret-for-tests-only-0123456789', 'utf8');

export interface ReviewTestApp extends TestApp {
  readonly store: Store;
}

/**
 * A real SQLite store in a fresh temp directory per test, closed afterwards, and the app built over
 * it with the given review access.
 */
export function useReviewApps(): (access?: ReviewAccessConfig, clock?: () => Date) => Promise<ReviewTestApp> {
  const tempDir = useTempDirs();
  const open: Store[] = [];
  afterEach(async () => {
    for (const store of open.splice(0)) {
      await store.close().catch(() => undefined);
    }
  });
  return async (access = { mode: 'demo' }, clock = () => REVIEW_NOW) => {
    const opened = openStore({ dataDir: tempDir() });
    if (opened.kind !== 'opened') {
      throw new Error(`store did not open: ${opened.problem}`);
    }
    open.push(opened.store);
    const built = await buildTestApp({ clock, store: opened.store, review: { access } });
    return { ...built, store: opened.store };
  };
}
