/**
 * Every match of a global pattern in `text`, in order: what `text.matchAll(pattern)` yields, without
 * the copy of the pattern and the iterator that `matchAll` makes on every call. On the short texts of
 * an order those two allocations cost several times what the pattern itself does, and the free-text
 * readers run a dozen patterns over every text.
 *
 * All matches are read before returning, and `lastIndex` is left at 0, so a caller may run the same
 * pattern again (on the same or another text) inside its loop over the result.
 */
export function allMatches(pattern: RegExp, text: string): readonly RegExpExecArray[] {
  if (!pattern.global) {
    // As matchAll: without `g` there is no "next" match, and a loop would never end.
    throw new TypeError(`allMatches needs a global pattern: /${pattern.source}/${pattern.flags}`);
  }
  const found: RegExpExecArray[] = [];
  pattern.lastIndex = 0;
  try {
    for (let m = pattern.exec(text); m !== null; m = pattern.exec(text)) {
      found.push(m);
      if (m[0] === '') {
        // An empty match would be found again at the same place; step past it as matchAll does.
        pattern.lastIndex = advance(text, pattern.lastIndex, pattern.unicode || pattern.flags.includes('v'));
      }
    }
  } finally {
    pattern.lastIndex = 0;
  }
  return found;
}

/** The index after the character at `index`: a whole surrogate pair in unicode mode (ECMA-262 AdvanceStringIndex). */
function advance(text: string, index: number, unicode: boolean): number {
  if (!unicode || index + 1 >= text.length) {
    return index + 1;
  }
  const first = text.charCodeAt(index);
  const second = text.charCodeAt(index + 1);
  const isPair = first >= 0xd800 && first <= 0xdbff && second >= 0xdc00 && second <= 0xdfff;
  return isPair ? index + 2 : index + 1;
}
