import { readFileSync, statSync } from 'node:fs';
import { isAbsolute, resolve } from 'node:path';
import type { EnvProblem } from './env-config.js';
import { VARIABLE_DOCS } from './variable-docs.js';

/**
 * Container secrets arrive as files (Docker and Kubernetes mount them under /run/secrets), so a
 * variable whose value is itself a secret may be given as `<NAME>_FILE`, the path of a file holding
 * the value. Variables that name a secret file already (`OXYGEN_CHECKER_PATIENT_KEY_FILE`,
 * `OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE`) need no second form. Problems name the variable and the
 * reason, never the file's contents.
 */

/** The variables marked `secret: 'value'` in VARIABLE_DOCS, each of which accepts `<NAME>_FILE`. */
export const SECRET_VALUE_VARIABLES: readonly string[] = Object.freeze(
  Object.entries(VARIABLE_DOCS)
    .filter(([, doc]) => doc.secret === 'value')
    .map(([name]) => name),
);

export type SecretValuesRead =
  | { readonly kind: 'ok'; readonly env: Readonly<Record<string, string | undefined>> }
  | { readonly kind: 'invalid'; readonly problems: readonly EnvProblem[] };

function code(error: unknown): string {
  return typeof error === 'object' && error !== null && 'code' in error && typeof error.code === 'string' ? error.code : 'error';
}

/**
 * A copy of `env` in which each `<NAME>_FILE` of `names` is replaced by `<NAME>` holding the file's
 * text (a trailing newline left off). Refused, with every problem, when both forms are set, or the
 * file cannot be read, is empty, or is open to group or others (a secret file is owner-only here, as
 * the patient-key and review-link secrets are).
 */
export function readSecretValueFiles(
  env: Readonly<Record<string, string | undefined>>,
  cwd: string,
  names: readonly string[] = SECRET_VALUE_VARIABLES,
): SecretValuesRead {
  const out: Record<string, string | undefined> = { ...env };
  const problems: EnvProblem[] = [];
  for (const name of names) {
    const variable = `${name}_FILE`;
    const path = (env[variable] ?? '').trim();
    if (path === '') {
      continue;
    }
    delete out[variable];
    if ((env[name] ?? '').trim() !== '') {
      problems.push({ variable, message: `is set together with ${name}; set one of them` });
      continue;
    }
    const file = isAbsolute(path) ? path : resolve(cwd, path);
    let text: string;
    try {
      const mode = statSync(file).mode;
      if ((mode & 0o077) !== 0) {
        problems.push({ variable, message: `${file} is readable or writable by group or others (mode ${(mode & 0o777).toString(8)}); run chmod 600 on it` });
        continue;
      }
      text = readFileSync(file, 'utf8').trimEnd();
    } catch (error) {
      problems.push({ variable, message: `${file} cannot be read (${code(error)})` });
      continue;
    }
    if (text === '') {
      problems.push({ variable, message: `${file} is empty` });
      continue;
    }
    out[name] = text;
  }
  return problems.length > 0 ? { kind: 'invalid', problems } : { kind: 'ok', env: out };
}
