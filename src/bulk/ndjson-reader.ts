import { createReadStream } from 'node:fs';
import { basename } from 'node:path';
import { createInterface } from 'node:readline';
import { asFhirResource, type FhirResource } from '../fhir/gathered-data.js';

/**
 * Reads an NDJSON file (FHIR Bulk Data: one resource a line) without holding it in memory: node's
 * readline splits the byte stream into lines, whatever the chunk boundaries, and takes CRLF as LF.
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

/** The resources of one NDJSON file in file order; malformed lines go to `problems`. */
export async function* readNdjsonFile(
  path: string,
  problems: NdjsonProblems,
  options: NdjsonReadOptions = {},
): AsyncGenerator<NdjsonRecord> {
  const file = basename(path);
  const stream = createReadStream(path, { encoding: 'utf8', highWaterMark: options.chunkBytes ?? 64 * 1024 });
  const lines = createInterface({ input: stream, crlfDelay: Infinity });
  let line = 0;
  try {
    for await (const text of lines) {
      line += 1;
      // A byte order mark before the first record is an encoding artefact, not part of the JSON.
      const json = line === 1 ? text.replace(/^\uFEFF/, '') : text;
      const read = readNdjsonLine(json);
      if (read === undefined) {
        continue;
      }
      if (typeof read === 'string') {
        problems.add({ file, line, reason: read });
        continue;
      }
      yield { resource: read, line, text: json };
    }
  } finally {
    lines.close();
    stream.destroy();
  }
}

/** How a problem is shown: file, line and what is wrong, never the line's text. */
export function describeNdjsonProblem(problem: NdjsonProblem): string {
  const what = problem.reason === 'not-json' ? 'not valid JSON' : 'not a FHIR resource (no resourceType)';
  return `${problem.file} line ${problem.line}: ${what}`;
}
