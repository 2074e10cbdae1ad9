import { fileURLToPath } from 'node:url';

/**
 * The package root, where `policies/` and `cards/` ship. This file sits at `src/config/` under tsx and
 * vitest and at `dist/config/` after `tsc -p tsconfig.build.json` (rootDir `src`), so the root is two
 * levels up in both layouts.
 */
export const PACKAGE_ROOT: string = fileURLToPath(new URL('../../', import.meta.url));

/** An absolute path to a file that ships with the package, e.g. `bundledPath('policies', 'x.yaml')`. */
export function bundledPath(...segments: readonly string[]): string {
  return fileURLToPath(new URL(segments.join('/'), new URL('../../', import.meta.url)));
}
