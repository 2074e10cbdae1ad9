import { createReadStream } from 'node:fs';
import { basename } from 'node:path';
import { StringDecoder } from 'node:string_decoder';
import { asFhirResource, type FhirResource } from '../fhir/gathered-data.js';

/**
 * Reads an NDJSON file (FHIR Bulk Data: one resource a line) without holding it in memory: the byte
 * stream is split into lines whatever the chunk boundaries, LF, CRLF and a lone CR each ending a line
 * (as node:readline reads them).
 * A line that is not a JSON object with a `resourceType` is counted and named by file and line number,
 * never echoed (an export holds patient data) and never fatal. Blank lines are skipped silently: the
 * NDJSON convention allows a trailing newline, and some writers leave blank lines between records.
 */

export interface NdjsonRecord {
  readonly resource: FhirResource;
  /** 1-based line number in its file. */
  readonly line: number;
  /** The line's JSON text as read (a leading BOM dropped): what `resource` was parsed from. */
  readonly text: string;
}

export interface NdjsonProblem {
  /** The file's base name (e.g. Observation.ndjson), never its contents. */
  readonly file: string;
  readonly line: number;
  readonly reason: 'not-json' | 'not-a-resource';
}

/** Collects the malformed lines of one or more files: a bounded list and an exact count. */
export class NdjsonProblems {
  static readonly KEPT = 50;
  #count = 0;
  readonly #kept: NdjsonProblem[] = [];

  add(problem: NdjsonProblem): void {
    this.#count += 1;
    if (this.#kept.length < NdjsonProblems.KEPT) {
      this.#kept.push(problem);
    }
  }

  /** How many malformed lines there were in all. */
  get count(): number {
    return this.#count;
  }

  /** The first KEPT problems, in the order met. */
  get first(): readonly NdjsonProblem[] {
    return this.#kept;
  }
}

/** One line read: a resource, a problem, or nothing (blank). Pure. */
export function readNdjsonLine(text: string): FhirResource | NdjsonProblem['reason'] | undefined {
  if (text.trim() === '') {
    return undefined;
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    return 'not-json';
  }
  return asFhirResource(value) ?? 'not-a-resource';
}

export interface NdjsonReadOptions {
  /** Read-stream chunk size in bytes (default 64 KiB); tests set it small to split lines across chunks. */
  readonly chunkBytes?: number;
}

/** A line ends at LF, CRLF or a lone CR, as node:readline reads them. */
const LINE_BREAK = /\r\n|\n|\r/;

/**
 * The resources of one NDJSON file in file order, a read chunk's complete lines at a time; malformed
 * lines go to `problems`. A batch holds at most one chunk's lines (64 KiB by default), so memory stays
 * flat. Handing on a chunk's lines together rather than one line per `await` matters for speed: on a
 * demo export the per-line async iteration of node:readline cost more than parsing the JSON.
 */
export async function* readNdjsonBatches(
  path: string,
  problems: NdjsonProblems,
  options: NdjsonReadOptions = {},
): AsyncGenerator<NdjsonRecord[]> {
  const file = basename(path);
  const stream = createReadStream(path, { highWaterMark: options.chunkBytes ?? 64 * 1024 });
  // Decodes UTF-8 across chunk boundaries: a multi-byte character split between chunks waits whole.
  const decoder = new StringDecoder('utf8');
  let line = 0;
  let rest = '';
  const read = (texts: readonly string[]): NdjsonRecord[] => {
    const records: NdjsonRecord[] = [];
    for (const text of texts) {
      line += 1;
      // A byte order mark before the first record is an encoding artefact, not part of the JSON.
      const json = line === 1 ? text.replace(/^\uFEFF/, '') : text;
      const resource = readNdjsonLine(json);
      if (resource === undefined) {
        continue;
      }
      if (typeof resource === 'string') {
        problems.add({ file, line, reason: resource });
        continue;
      }
      records.push({ resource, line, text: json });
    }
    return records;
  };
  try {
    for await (const chunk of stream) {
      const text = rest + decoder.write(chunk as Buffer);
      // A CR at the very end may be the first half of a CRLF split across chunks: it waits for the next.
      const ended = text.endsWith('\r') ? text.slice(0, -1) : text;
      const cut = Math.max(ended.lastIndexOf('\n'), ended.lastIndexOf('\r'));
      if (cut === -1) {
        rest = text;
        continue;
      }
      rest = text.slice(cut + 1);
      // Split after the last break, so the last piece is always the empty text after it.
      const batch = read(text.slice(0, cut + 1).split(LINE_BREAK).slice(0, -1));
      if (batch.length > 0) {
        yield batch;
      }
    }
    // The last line needs no line end; text after a final line end is not a line.
    const last = (rest + decoder.end()).split(LINE_BREAK);
    const batch = read(last.at(-1) === '' ? last.slice(0, -1) : last);
    if (batch.length > 0) {
      yield batch;
    }
  } finally {
    stream.destroy();
  }
}

/** The resources of one NDJSON file in file order, one at a time; malformed lines go to `problems`. */
export async function* readNdjsonFile(
  path: string,
  problems: NdjsonProblems,
  options: NdjsonReadOptions = {},
): AsyncGenerator<NdjsonRecord> {
  for await (const batch of readNdjsonBatches(path, problems, options)) {
    yield* batch;
  }
}

/** How a problem is shown: file, line and what is wrong, never the line's text. */
export function describeNdjsonProblem(problem: NdjsonProblem): string {
  const what = problem.reason === 'not-json' ? 'not valid JSON' : 'not a FHIR resource (no resourceType)';
  return `${problem.file} line ${problem.line}: ${what}`;
}
