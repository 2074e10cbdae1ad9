import { Writable } from 'node:stream';

/** A pino destination that keeps each written line, parsed, for tests to read. */
export interface MemoryLog {
  readonly stream: Writable;
  readonly lines: () => Record<string, unknown>[];
  readonly text: () => string;
}

export function createMemoryLog(): MemoryLog {
  let buffer = '';
  const stream = new Writable({
    write(chunk: Buffer | string, _encoding, callback) {
      buffer += chunk.toString();
      callback();
    },
  });
  return {
    stream,
    text: () => buffer,
    lines: () =>
      buffer
        .split('\n')
        .filter((line) => line.trim() !== '')
        .map((line) => JSON.parse(line) as Record<string, unknown>),
  };
}
