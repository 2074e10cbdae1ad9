import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach } from 'vitest';

/** A fresh directory per test, removed afterwards; call at the top of a describe block. */
export function useTempDirs(): () => string {
  const made: string[] = [];
  afterEach(() => {
    for (const dir of made.splice(0)) {
      rmSync(dir, { recursive: true, force: true });
    }
  });
  return () => {
    const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-store-'));
    made.push(dir);
    return dir;
  };
}
