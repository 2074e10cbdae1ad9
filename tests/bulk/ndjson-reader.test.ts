import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { describeNdjsonProblem, NdjsonProblems, readNdjsonFile, readNdjsonLine } from '../../src/bulk/ndjson-reader.js';

/**
 * The NDJSON reader of FHIR Bulk Data exports (the Bulk Data Access IG: one resource a line, LF
 * separated). Malformed lines are counted with file and line number and never echoed.
 */

const dir = mkdtempSync(join(tmpdir(), 'ndjson-reader-test-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function write(name: string, text: string): string {
  const path = join(dir, name);
  writeFileSync(path, text);
  return path;
}

async function readAll(path: string, chunkBytes?: number): Promise<{ ids: string[]; lines: number[]; texts: string[]; problems: NdjsonProblems }> {
  const problems = new NdjsonProblems();
  const ids: string[] = [];
  const lines: number[] = [];
  const texts: string[] = [];
  for await (const record of readNdjsonFile(path, problems, chunkBytes === undefined ? {} : { chunkBytes })) {
    ids.push(record.resource.id ?? '');
    lines.push(record.line);
    texts.push(record.text);
    // The text handed on (the index stores it) is what the resource was read from.
    expect(JSON.parse(record.text)).toStrictEqual(record.resource);
  }
  return { ids, lines, texts, problems };
}

const patient = (id: string, extra = ''): string => JSON.stringify({ resourceType: 'Patient', id, name: [{ text: `Invented ${extra}` }] });

describe('readNdjsonFile', () => {
  it('reads one resource a line, in file order, with 1-based line numbers', async () => {
    const path = write('Patient.ndjson', `${patient('a')}\n${patient('b')}\n${patient('c')}\n`);
    const read = await readAll(path);
    expect(read.ids).toStrictEqual(['a', 'b', 'c']);
    expect(read.lines).toStrictEqual([1, 2, 3]);
    expect(read.problems.count).toBe(0);
  });

  it('counts malformed lines by file and line number and goes on reading, never holding their text', async () => {
    const secret = 'Quarrie-Maude-secret-text';
    const path = write('Observation.ndjson', [patient('a'), `{"resourceType": "Patient", "id": "${secret}"`, '[1,2,3]', `not json ${secret}`, patient('b')].join('\n'));
    const read = await readAll(path);
    expect(read.ids).toStrictEqual(['a', 'b']);
    expect(read.problems.count).toBe(3);
    expect(read.problems.first).toStrictEqual([
      { file: 'Observation.ndjson', line: 2, reason: 'not-json' },
      { file: 'Observation.ndjson', line: 3, reason: 'not-a-resource' },
      { file: 'Observation.ndjson', line: 4, reason: 'not-json' },
    ]);
    const shown = read.problems.first.map(describeNdjsonProblem).join('\n');
    expect(shown).toContain('Observation.ndjson line 2');
    expect(shown).not.toContain(secret);
  });

  it('skips blank lines (a trailing newline, blank lines between records) without counting them', async () => {
    const path = write('blank.ndjson', `\n${patient('a')}\n\n   \n${patient('b')}\n\n`);
    const read = await readAll(path);
    expect(read.ids).toStrictEqual(['a', 'b']);
    expect(read.lines).toStrictEqual([2, 5]);
    expect(read.problems.count).toBe(0);
  });

  it('takes CRLF line ends as LF, and a byte order mark before the first record', async () => {
    const path = write('crlf.ndjson', `\uFEFF${patient('a')}\r\n${patient('b')}\r\n`);
    const read = await readAll(path);
    expect(read.ids).toStrictEqual(['a', 'b']);
    expect(read.texts).toStrictEqual([patient('a'), patient('b')]);
    expect(read.problems.count).toBe(0);
  });

  it('joins a line split across read chunks, including inside a multi-byte character', async () => {
    // 7-byte chunks split every line several times, and "é" (2 bytes in UTF-8) falls across some.
    const records = Array.from({ length: 20 }, (_, i) => patient(`p${i}`, 'éé'.repeat(i % 5)));
    const path = write('split.ndjson', records.join('\n'));
    const read = await readAll(path, 7);
    expect(read.ids).toStrictEqual(records.map((_, i) => `p${i}`));
    expect(read.texts).toStrictEqual(records);
    expect(read.problems.count).toBe(0);
  });

  it('reads the same records and line numbers whatever the chunk size, with LF, CRLF and lone CR line ends', async () => {
    // LF is the Bulk Data Access IG's separator; CRLF and a lone CR are read as line ends too, as
    // node:readline reads them (common practice for text files from other systems). Every chunk size
    // from 1 byte puts a chunk boundary between the CR and LF of a CRLF, and inside "é" (2 bytes).
    const text = `\uFEFF${patient('a', 'é')}\r\n\r\n${patient('b')}\r${patient('c', 'éé')}\n\n{broken\r\n${patient('d')}`;
    const path = write('mixed.ndjson', text);
    for (let chunkBytes = 1; chunkBytes <= 40; chunkBytes += 1) {
      const read = await readAll(path, chunkBytes);
      expect(read.ids).toStrictEqual(['a', 'b', 'c', 'd']);
      expect(read.lines).toStrictEqual([1, 3, 4, 7]);
      expect(read.texts).toStrictEqual([patient('a', 'é'), patient('b'), patient('c', 'éé'), patient('d')]);
      expect(read.problems.first).toStrictEqual([{ file: 'mixed.ndjson', line: 6, reason: 'not-json' }]);
    }
  });

  it('ends the last line at the end of the file, with or without a line end, and makes no line of what follows the last end', async () => {
    for (const [ending, lines] of [['', [1, 2]], ['\n', [1, 2]], ['\r\n', [1, 2]], ['\r', [1, 2]], ['\n\n', [1, 2]]] as const) {
      const read = await readAll(write('end.ndjson', `${patient('a')}\n${patient('b')}${ending}`), 3);
      expect(read.ids).toStrictEqual(['a', 'b']);
      expect(read.lines).toStrictEqual(lines);
    }
    expect((await readAll(write('empty.ndjson', ''))).ids).toStrictEqual([]);
  });

  it('keeps a bounded list of problems but counts them all', async () => {
    const lines = Array.from({ length: NdjsonProblems.KEPT + 25 }, () => '{broken');
    const read = await readAll(write('many.ndjson', lines.join('\n')));
    expect(read.problems.count).toBe(NdjsonProblems.KEPT + 25);
    expect(read.problems.first).toHaveLength(NdjsonProblems.KEPT);
  });
});

describe('readNdjsonLine', () => {
  it.each([
    ['', undefined],
    ['  \t', undefined],
    ['{"id":"x"}', 'not-a-resource'],
    ['"Patient"', 'not-a-resource'],
    ['{"resourceType":"patient"}', 'not-a-resource'],
    ['{"resourceType":', 'not-json'],
  ])('reads %j as %j', (text, expected) => {
    expect(readNdjsonLine(text)).toBe(expected);
  });
});
