/**
 * Where JSON text first breaks the grammar (RFC 8259), and what was expected there. Node's own
 * JSON.parse messages quote a stretch of the text around the fault ("Unexpected token 'x', "...
 * is not valid JSON"), which would echo a file's contents, secrets included, to a terminal or a CI
 * log; this gives the line and column instead, and no text. Pure.
 */

export interface JsonSyntaxError {
  /** What the grammar wants at the fault, e.g. "',' or '}'". */
  readonly expected: string;
  /** 1-based, as editors count. */
  readonly line: number;
  readonly column: number;
}

/** Thrown inside the scanner only, to unwind from the fault; never leaves this file. */
class Fault extends Error {
  constructor(
    readonly offset: number,
    readonly expected: string,
  ) {
    super(expected);
  }
}

const ESCAPES = new Set(['"', '\\', '/', 'b', 'f', 'n', 'r', 't']);

function scan(text: string): void {
  let i = 0;
  const space = (): void => {
    while (i < text.length && ' \t\n\r'.includes(text.charAt(i))) i += 1;
  };
  const fail = (expected: string, at = i): never => {
    throw new Fault(at, expected);
  };
  const string = (): void => {
    i += 1;
    while (i < text.length) {
      const c = text.charAt(i);
      if (c === '"') {
        i += 1;
        return;
      }
      if (c === '\\') {
        const next = text.charAt(i + 1);
        if (next === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) fail('four hex digits after \\u', i + 2);
          i += 6;
          continue;
        }
        if (!ESCAPES.has(next)) fail('an escape such as \\n or \\" after a backslash', i + 1);
        i += 2;
        continue;
      }
      if (c < ' ') fail('no line break or control character inside a string (write \\n)');
      i += 1;
    }
    fail('a closing double quote');
  };
  const digits = (what: string): void => {
    const start = i;
    while (text.charAt(i) >= '0' && text.charAt(i) <= '9') i += 1;
    if (i === start) fail(what);
  };
  const number = (): void => {
    if (text.charAt(i) === '-') i += 1;
    if (text.charAt(i) === '0') i += 1;
    else digits('a digit');
    if (text.charAt(i) === '.') {
      i += 1;
      digits('a digit after the decimal point');
    }
    if (text.charAt(i) === 'e' || text.charAt(i) === 'E') {
      i += 1;
      if (text.charAt(i) === '+' || text.charAt(i) === '-') i += 1;
      digits('a digit in the exponent');
    }
  };
  const value = (): void => {
    space();
    const c = text.charAt(i);
    if (c === '{') {
      i += 1;
      space();
      if (text.charAt(i) === '}') {
        i += 1;
        return;
      }
      for (;;) {
        space();
        if (text.charAt(i) !== '"') fail('a property name in double quotes');
        string();
        space();
        if (text.charAt(i) !== ':') fail("':'");
        i += 1;
        value();
        space();
        if (text.charAt(i) === ',') {
          i += 1;
          continue;
        }
        if (text.charAt(i) === '}') {
          i += 1;
          return;
        }
        fail("',' or '}'");
      }
    }
    if (c === '[') {
      i += 1;
      space();
      if (text.charAt(i) === ']') {
        i += 1;
        return;
      }
      for (;;) {
        value();
        space();
        if (text.charAt(i) === ',') {
          i += 1;
          continue;
        }
        if (text.charAt(i) === ']') {
          i += 1;
          return;
        }
        fail("',' or ']'");
      }
    }
    if (c === '"') {
      string();
      return;
    }
    const literal = ['true', 'false', 'null'].find((word) => word.charAt(0) === c);
    if (literal !== undefined) {
      // At the first character that departs from the word, as a reader would look for the slip.
      for (const expected of literal) {
        if (text.charAt(i) !== expected) fail(`'${literal}'`);
        i += 1;
      }
      return;
    }
    if (c === '-' || (c >= '0' && c <= '9')) {
      number();
      return;
    }
    fail(i >= text.length ? 'a value, but the file ends' : 'a value (an object, list, string in double quotes, number, true, false or null)');
  };
  value();
  space();
  if (i < text.length) fail('the end of the file after the JSON value');
}

function position(text: string, offset: number): { line: number; column: number } {
  const before = text.slice(0, offset);
  const line = before.split('\n').length;
  return { line, column: offset - (before.lastIndexOf('\n') + 1) + 1 };
}

/** The first syntax error in `text`, or undefined when it is valid JSON (or nested too deep to scan). */
export function findJsonSyntaxError(text: string): JsonSyntaxError | undefined {
  try {
    scan(text);
    return undefined;
  } catch (error) {
    if (error instanceof Fault) return { expected: error.expected, ...position(text, error.offset) };
    if (error instanceof RangeError) return undefined;
    throw error;
  }
}
