/**
 * Variables with the service's prefix that it does not read. A misspelt name would otherwise be ignored
 * silently and its setting would fall back to the default, so each one refuses start-up, with the
 * nearest known name as a suggestion.
 */

/**
 * Edit distance with adjacent transpositions (the "optimal string alignment" distance): the fewest
 * insertions, deletions, substitutions and swaps of two neighbouring characters that turn `a` into `b`.
 * Swaps count as one edit because transposed letters are a common typing slip.
 */
export function editDistance(a: string, b: string): number {
  const cols = b.length + 1;
  const d = new Array<number>((a.length + 1) * cols).fill(0);
  const at = (i: number, j: number): number => d[i * cols + j] ?? 0;
  for (let i = 0; i <= a.length; i += 1) d[i * cols] = i;
  for (let j = 0; j <= b.length; j += 1) d[j] = j;
  for (let i = 1; i <= a.length; i += 1) {
    for (let j = 1; j <= b.length; j += 1) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let best = Math.min(at(i - 1, j) + 1, at(i, j - 1) + 1, at(i - 1, j - 1) + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) {
        best = Math.min(best, at(i - 2, j - 2) + 1);
      }
      d[i * cols + j] = best;
    }
  }
  return at(a.length, b.length);
}

/**
 * The known name nearest to `name` (case ignored), or undefined when none is close enough to be a
 * plausible misspelling: at most a third of the part after the prefix, and never fewer than 2 edits.
 */
export function nearestName(name: string, known: readonly string[], prefix: string): string | undefined {
  const upper = name.toUpperCase();
  const allowed = Math.max(2, Math.floor((upper.length - prefix.length) / 3));
  let best: { name: string; distance: number } | undefined;
  for (const candidate of known) {
    const distance = editDistance(upper, candidate);
    if (distance <= allowed && (best === undefined || distance < best.distance)) {
      best = { name: candidate, distance };
    }
  }
  return best?.name;
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
            ? `remove it, or use one of the settings listed in README.md ("Configuration") and docs/security.md`
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
