import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ENV_DEFAULTS } from '../../../src/config/env-config.js';

/**
 * Policy files for the reload tests: the bundled preset (BTS 2017 based; its comments give each
 * value's source) copied into a temporary folder, then edited line by line as a policy team would.
 */

export const BUNDLED_TEXT = readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY, 'utf8');

/** The bundled text with each `[from, to]` replaced once; a `from` not found fails the test. */
export function edited(...replacements: readonly (readonly [string, string])[]): string {
  let text = BUNDLED_TEXT;
  for (const [from, to] of replacements) {
    if (!text.includes(from)) {
      throw new Error(`the bundled policy no longer has ${JSON.stringify(from)}`);
    }
    text = text.replace(from, to);
  }
  return text;
}

/** A new version of the bundled policy under the site's own id: a valid, different file. */
export function larkspurPolicy(version: string): string {
  return edited(['id: based-on-bts-2017', 'id: larkspur-bay-adult'], ['version: "1.0.0"', `version: "${version}"`]);
}

export function sha256(text: string): string {
  return createHash('sha256').update(text, 'utf8').digest('hex');
}

export interface PolicyFolder {
  readonly policyPath: string;
  readonly cardsDir: string;
  /** Saves as many editors do: a new file renamed over the old one. */
  write(text: string): void;
}

export function policyFolder(initial: string): PolicyFolder {
  const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-reload-'));
  const policyPath = join(dir, 'larkspur-bay.yaml');
  let saves = 0;
  const write = (text: string): void => {
    const temporary = join(dir, `.larkspur-bay.yaml.${++saves}.tmp`);
    writeFileSync(temporary, text);
    renameSync(temporary, policyPath);
  };
  write(initial);
  return { policyPath, cardsDir: ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR, write };
}
