import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { findJsonSyntaxError } from '../../src/text/json-syntax-error.js';
import { runCommandLine } from './cli-harness.js';

/**
 * A file given to the command line may hold something private (a token pasted in by mistake, a
 * configuration file passed instead of a policy). Errors name the file, line and column, and never
 * print its text: neither node's JSON.parse messages (which quote the text) nor yaml's code frames.
 */
const SECRET = 'sk-live-7Qm2Zr9Xw4Kp';
const dir = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-echo-'));

function write(name: string, text: string): string {
  const file = join(dir, name);
  writeFileSync(file, text);
  return file;
}

const everything = (run: { stdout: string; stderr: string }): string => run.stdout + run.stderr;

describe('errors never echo a file', () => {
  // [what, text, line, column]; positions counted by hand from the text.
  const JSON_CASES: readonly [string, string, number, number][] = [
    ['an unquoted value', `{\n  "hook": "order-sign",\n  "apiToken": ${SECRET}\n}`, 3, 15],
    ['an unquoted key', `{\n  apiToken: "${SECRET}"\n}`, 2, 3],
    ['a missing comma', `{\n  "apiToken": "${SECRET}"\n  "hook": "order-sign"\n}`, 3, 3],
    ['a line break in a string', `{\n  "apiToken": "${SECRET}\n"\n}`, 2, 36],
    ['text after the value', `{"hook": "order-sign"}\napiToken=${SECRET}\n`, 2, 1],
    ['a file that ends early', `{\n  "apiToken": "${SECRET}",\n`, 3, 1],
  ];

  it.each(JSON_CASES)('a request file with %s: evaluate and retime name the line and column', async (_what, text, line, column) => {
    const file = write('request.json', text);
    for (const command of ['evaluate', 'retime']) {
      const run = await runCommandLine([command, file]);
      expect(run.code).toBe(1);
      expect(run.stderr).toContain(`${file}:${line}:${column}: not valid JSON: expected `);
      expect(everything(run)).not.toContain(SECRET);
      expect(everything(run)).not.toContain(SECRET.slice(0, 8));
    }
  });

  it('finds an error exactly when JSON.parse does, at the position node names when it names one', () => {
    const position = (text: string, offset: number): string => {
      const before = text.slice(0, offset);
      return `${before.split('\n').length}:${offset - before.lastIndexOf('\n')}`;
    };
    // Arbitrary JSON, JSON with one character changed, and arbitrary text: the scanner and JSON.parse
    // must agree on every one (fixed seed, so a failure repeats).
    const texts = fc.oneof(
      fc.json(),
      fc.tuple(fc.json(), fc.nat(), fc.constantFrom('"', ',', '}', ']', ':', 'x', '\n', '\\', '0')).map(([t, i, c]) => {
        const at = t.length === 0 ? 0 : i % t.length;
        return t.slice(0, at) + c + t.slice(at + 1);
      }),
      fc.string(),
    );
    fc.assert(
      fc.property(texts, (text) => {
        let nodeMessage: string | undefined;
        try {
          JSON.parse(text);
        } catch (error) {
          nodeMessage = (error as Error).message;
        }
        const found = findJsonSyntaxError(text);
        expect(found === undefined).toBe(nodeMessage === undefined);
        const offset = /at position (\d+)/.exec(nodeMessage ?? '')?.[1];
        if (found !== undefined && offset !== undefined) {
          expect(`${found.line}:${found.column}`).toBe(position(text, Number(offset)));
        }
      }),
      { seed: 20261204, numRuns: 2000 },
    );
  });

  // YAML policy files: broken syntax, a list or text instead of a mapping, an alias named after a secret.
  const YAML_CASES: readonly [string, string, number | undefined][] = [
    ['bad indentation', `format: 1\napiToken: ${SECRET}\n  extra: 1\n`, 2],
    ['an unclosed quote', `format: 1\napiToken: "${SECRET}\nid: x\n`, undefined],
    ['a duplicate key', `apiToken: ${SECRET}\napiToken: ${SECRET}\n`, 2],
    ['a tab for indentation', `site:\n\tapiToken: ${SECRET}\n`, 2],
    ['an alias that names no anchor', `format: 1\napiToken: *${SECRET}\n`, undefined],
    ['an unknown tag', `format: 1\napiToken: !${SECRET} x\n`, undefined],
    ['a stray token', `- ${SECRET}\nkey: value\n`, 2],
    ['text only', `${SECRET}\n`, 1],
    ['a list of secrets', `- ${SECRET}\n- ${SECRET}\n`, 1],
  ];

  it.each(YAML_CASES)('a policy file with %s: validate, diff and evaluate --policy never print it', async (_what, text, line) => {
    const file = write('policy.yaml', text);
    const bundled = new URL('../../policies/based-on-bts-2017.yaml', import.meta.url).pathname;
    const request = new URL('../../examples/order-sign-face-mask-no-target.json', import.meta.url).pathname;
    const runs = [
      await runCommandLine(['policy', 'validate', file]),
      await runCommandLine(['policy', 'diff', bundled, file]),
      await runCommandLine(['evaluate', request, '--policy', file]),
    ];
    for (const run of runs) {
      expect(run.code).toBe(2);
      expect(everything(run)).not.toContain(SECRET.slice(0, 8));
    }
    const validate = everything(runs[0] ?? { stdout: '', stderr: '' });
    expect(validate).toContain(`${file}: not valid:`);
    if (line !== undefined) expect(validate).toMatch(new RegExp(`${file}:${line}:\\d+: error: `));
  });
});
