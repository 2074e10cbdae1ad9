import { isMap, isPair, isScalar, isSeq, LineCounter, parseDocument, type Document, type Node } from 'yaml';
import { yamlProblemText } from '../text/yaml-message.js';

/**
 * Where a problem sits in the policy text. Pure: works on the text it is given.
 *
 * The convention, for every problem: the line and column of the key that holds the value at fault
 * (`lowPercent` in `standard: { lowPercent: 99, ... }`), or of the list item at fault. A key that is
 * missing is reported at its nearest parent key that is present; the file as a whole at line 1,
 * column 1. Lines and columns count from 1, as editors do.
 */

export interface TextPosition {
  readonly line: number;
  readonly column: number;
}

export interface LocatedDocument {
  /** The plain JS value of the document, or undefined when the YAML itself is broken. */
  readonly value: unknown;
  /** YAML syntax errors, each with its position. */
  readonly syntaxErrors: readonly { readonly message: string; readonly position: TextPosition }[];
  /** The position of the key or item at `path`, or of its nearest present parent. */
  readonly locate: (path: readonly PropertyKey[]) => TextPosition;
}

const START: TextPosition = { line: 1, column: 1 };

function keyMatches(key: unknown, wanted: PropertyKey): boolean {
  const plain = isScalar(key) ? key.value : key;
  return String(plain) === String(wanted);
}

export function locateDocument(text: string): LocatedDocument {
  const lineCounter = new LineCounter();
  // logLevel 'error': yaml would otherwise print its warnings, with the offending line, to stderr itself.
  const doc: Document = parseDocument(text, { lineCounter, prettyErrors: true, logLevel: 'error' });
  const at = (offset: number | undefined): TextPosition => {
    if (offset === undefined) return START;
    const { line, col } = lineCounter.linePos(offset);
    return { line, column: col };
  };
  const syntaxErrors = doc.errors.map((error) => ({
    // The description only: the position is given separately, and the file's text is never echoed.
    message: yamlProblemText(error.message),
    position: error.linePos === undefined ? START : { line: error.linePos[0].line, column: error.linePos[0].col },
  }));

  const locate = (path: readonly PropertyKey[]): TextPosition => {
    let node: unknown = doc.contents;
    let found: TextPosition = START;
    for (const step of path) {
      if (isMap(node)) {
        const pair = node.items.find((item) => isPair(item) && keyMatches(item.key, step));
        if (pair === undefined) return found;
        found = at((pair.key as Node | null)?.range?.[0]);
        node = pair.value;
      } else if (isSeq(node) && typeof step === 'number') {
        const item = node.items[step] as Node | undefined;
        if (item === undefined) return found;
        found = at(item.range?.[0]);
        node = item;
      } else {
        return found;
      }
    }
    return found;
  };

  if (syntaxErrors.length > 0) {
    return { value: undefined, syntaxErrors, locate };
  }
  try {
    return { value: doc.toJS(), syntaxErrors, locate };
  } catch (error) {
    // e.g. an alias expanded past yaml's limit: a problem with the file, not a crash.
    const message = error instanceof Error ? yamlProblemText(error.message) : 'unreadable YAML';
    return { value: undefined, syntaxErrors: [{ message, position: START }], locate };
  }
}
