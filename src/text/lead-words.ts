import { allMatches } from './all-matches.js';

/**
 * Finds, in one scan of each text, which keys have a lead word starting one of its words. A reader that
 * runs many patterns over a text gives each pattern the lead words every match of it starts a word
 * with, and runs only the patterns whose lead words the text holds: one scan instead of a search per
 * pattern, most of which find nothing (a condition's words name one or two kinds of twenty).
 *
 * A lead word is a run of lower-case ASCII letters and digits. It is found as `\b` and the i flag
 * (without u) find it: at the start of a word, in any letter case, and never on a non-ASCII letter,
 * which the i flag does not fold onto ASCII. So a pattern written `\bword...` with the i flag matches
 * only where its lead word is found.
 */
export type LeadWordFinder<K> = (texts: readonly string[]) => ReadonlySet<K>;

const LEAD_WORD = /^[a-z0-9]+$/;

export function leadWordFinder<K>(leadsByKey: ReadonlyMap<K, readonly string[]>): LeadWordFinder<K> {
  const keysOfWord = new Map<string, Set<K>>();
  for (const [key, words] of leadsByKey) {
    for (const word of words) {
      if (!LEAD_WORD.test(word)) {
        throw new TypeError(`a lead word is lower-case ASCII letters and digits: '${word}'`);
      }
      const keys = keysOfWord.get(word) ?? new Set<K>();
      keys.add(key);
      keysOfWord.set(word, keys);
    }
  }
  // Where several lead words start at one place ("co" and "copd"), the scan reports the longest, so
  // each word also stands for the keys of the lead words it begins with.
  const keysFound = new Map<string, readonly K[]>();
  for (const word of keysOfWord.keys()) {
    const keys = [...keysOfWord].filter(([shorter]) => word.startsWith(shorter)).flatMap(([, k]) => [...k]);
    keysFound.set(word, [...new Set(keys)]);
  }
  const longestFirst = [...keysOfWord.keys()].sort((a, b) => b.length - a.length || (a < b ? -1 : 1));
  // A lead word is letters and digits only, so a match ends inside the word it starts and the next
  // search, from its end, misses no later word.
  const scan = new RegExp(String.raw`\b(?:${longestFirst.join('|')})`, 'gi');
  return (texts) => {
    const found = new Set<K>();
    for (const text of texts) {
      for (const m of allMatches(scan, text)) {
        for (const key of keysFound.get(m[0].toLowerCase()) ?? []) {
          found.add(key);
        }
      }
    }
    return found;
  };
}
