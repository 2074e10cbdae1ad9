/**
 * Edit distance with adjacent transpositions (the "optimal string alignment" distance): the fewest
 * insertions, deletions, substitutions and swaps of two neighbouring characters that turn `a` into `b`.
 * Swaps count as one edit because transposed letters are a common typing slip. Shared by the
 * configuration check ("did you mean OXYGEN_CHECKER_POLICY?") and the command line ("did you mean
 * --unit?").
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
 * The candidate nearest to `word`, or undefined when none is within `allowed` edits (ties go to the
 * earlier candidate, so callers list the likelier names first).
 */
export function nearestWithin(word: string, candidates: readonly string[], allowed: number): string | undefined {
  let best: { name: string; distance: number } | undefined;
  for (const candidate of candidates) {
    const distance = editDistance(word, candidate);
    if (distance <= allowed && (best === undefined || distance < best.distance)) {
      best = { name: candidate, distance };
    }
  }
  return best?.name;
}
