/**
 * Variables with the service's prefix that it does not read. A misspelt name would otherwise be ignored
 * silently and its setting would fall back to the default, so each one refuses start-up, with the
 * nearest known name as a suggestion.
 */

import { editDistance, nearestWithin } from '../text/edit-distance.js';

export { editDistance };

/**
 * The known name nearest to `name` (case ignored), or undefined when none is close enough to be a
 * plausible misspelling: at most a third of the part after the prefix, and never fewer than 2 edits.
 */
export function nearestName(name: string, known: readonly string[], prefix: string): string | undefined {
  const upper = name.toUpperCase();
  return nearestWithin(upper, known, Math.max(2, Math.floor((upper.length - prefix.length) / 3)));
}

/**
 * Every variable in `env` whose name starts with `prefix` (case ignored) and is not one of `known`,
 * in name order, each with a message. Variables without the prefix belong to others and are ignored.
 */
export function unknownVariables(
  env: Readonly<Record<string, string | undefined>>,
  known: readonly string[],
  prefix: string,
): { variable: string; message: string }[] {
  const knownSet = new Set(known);
  return Object.keys(env)
    .filter((name) => env[name] !== undefined && name.toUpperCase().startsWith(prefix) && !knownSet.has(name))
    .sort()
    .map((variable) => {
      const suggestion = nearestName(variable, known, prefix);
      return {
        variable,
        message:
          `is not a setting of this service, so it would be ignored; ` +
          (suggestion === undefined
            ? `remove it, or use one of the settings listed in docs/configuration.md`
            : `did you mean ${suggestion}?`),
      };
    });
}

/**
 * Every variable in `env` that still carries a retired prefix, each with the name it has now (or a
 * note that the setting no longer exists).
 */
export function renamedVariables(
  env: Readonly<Record<string, string | undefined>>,
  known: readonly string[],
  retiredPrefix: string,
  prefix: string,
): { variable: string; message: string }[] {
  return Object.keys(env)
    .filter((name) => env[name] !== undefined && name.toUpperCase().startsWith(retiredPrefix))
    .sort()
    .map((variable) => {
      const renamed = prefix + variable.slice(retiredPrefix.length).toUpperCase();
      return {
        variable,
        message: known.includes(renamed)
          ? `uses the prefix this service had before version 0.2; rename it to ${renamed}`
          : `uses the prefix this service had before version 0.2 and names no current setting; remove it`,
      };
    });
}
