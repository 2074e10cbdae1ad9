import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { escapeXml, junitXml } from '../../src/cli/junit-xml.js';
import { examplePath, runCommandLine } from './cli-harness.js';

const repo = (path: string): string => new URL(`../../${path}`, import.meta.url).pathname;
const BTS = repo('policies/based-on-bts-2017.yaml');
const TSANZ = repo('policies/based-on-tsanz-2015.yaml');
const EXAMPLE_CASES = repo('examples/policy-cases');

// ---------------------------------------------------------------------------------------------------
// A strict reader for the XML subset JUnit uses (XML 1.0: prolog, elements, attributes, text, the five
// predefined entities and character references; no DTD, comments, CDATA or processing instructions).
// It throws on anything not well-formed, so the report is checked by structure, not by eye.

interface XmlElement {
  readonly name: string;
  readonly attributes: Readonly<Record<string, string>>;
  readonly children: XmlElement[];
  text: string;
}

const NAME = '[A-Za-z_][A-Za-z0-9_.:-]*';
const REFERENCE = '&(?:amp|lt|gt|quot|apos|#[0-9]+|#x[0-9A-Fa-f]+);';
const ATTRIBUTE = new RegExp(`\\s+(${NAME})="((?:[^<&"]|${REFERENCE})*)"`, 'y');
const TEXT = new RegExp(`(?:[^<&]|${REFERENCE})+`, 'y');
// eslint-disable-next-line no-control-regex
const FORBIDDEN_CHARACTERS = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]/;

function decode(text: string): string {
  return text.replace(/&(amp|lt|gt|quot|apos|#[0-9]+|#x[0-9A-Fa-f]+);/g, (_, ref: string) => {
    const named: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" };
    if (named[ref] !== undefined) return named[ref];
    return String.fromCodePoint(ref.startsWith('#x') ? parseInt(ref.slice(2), 16) : Number(ref.slice(1)));
  });
}

function parseXml(xml: string): XmlElement {
  const prolog = '<?xml version="1.0" encoding="UTF-8"?>\n';
  if (!xml.startsWith(prolog)) throw new Error('no XML declaration');
  if (FORBIDDEN_CHARACTERS.test(xml)) throw new Error('a character XML 1.0 forbids');
  let at = prolog.length;
  const stack: XmlElement[] = [];
  let root: XmlElement | undefined;
  while (at < xml.length) {
    if (xml.startsWith('</', at)) {
      const close = new RegExp(`</(${NAME})\\s*>`, 'y');
      close.lastIndex = at;
      const match = close.exec(xml);
      const open = stack.pop();
      if (match === null || open === undefined || open.name !== match[1]) throw new Error(`mismatched end tag at ${at}`);
      at = close.lastIndex;
      continue;
    }
    if (xml[at] === '<') {
      const start = new RegExp(`<(${NAME})`, 'y');
      start.lastIndex = at;
      const name = start.exec(xml)?.[1];
      if (name === undefined) throw new Error(`bad tag at ${at}`);
      at = start.lastIndex;
      const attributes: Record<string, string> = {};
      for (;;) {
        ATTRIBUTE.lastIndex = at;
        const attribute = ATTRIBUTE.exec(xml);
        if (attribute === null) break;
        const [, key = '', value = ''] = attribute;
        if (key in attributes) throw new Error(`attribute ${key} twice`);
        attributes[key] = decode(value);
        at = ATTRIBUTE.lastIndex;
      }
      const end = /\s*(\/?)>/y;
      end.lastIndex = at;
      const closing = end.exec(xml);
      if (closing === null) throw new Error(`unterminated tag ${name} at ${at}`);
      at = end.lastIndex;
      const element: XmlElement = { name, attributes, children: [], text: '' };
      const parent = stack.at(-1);
      if (parent !== undefined) parent.children.push(element);
      else if (root === undefined) root = element;
      else throw new Error('a second root element');
      if (closing[1] !== '/') stack.push(element);
      continue;
    }
    TEXT.lastIndex = at;
    const text = TEXT.exec(xml);
    if (text === null) throw new Error(`a bare & or < at ${at}`);
    const parent = stack.at(-1);
    if (parent === undefined ? text[0].trim() !== '' : false) throw new Error('text outside the root element');
    if (parent !== undefined) parent.text += decode(text[0]);
    at = TEXT.lastIndex;
  }
  if (stack.length > 0 || root === undefined) throw new Error('unclosed elements');
  return root;
}

const all = (element: XmlElement, name: string): XmlElement[] =>
  element.children.flatMap((child) => [...(child.name === name ? [child] : []), ...all(child, name)]);

// ---------------------------------------------------------------------------------------------------

function tempDir(): string {
  return mkdtempSync(join(tmpdir(), 'policy-test-'));
}

function writeCase(dir: string, name: string, lines: readonly string[]): void {
  writeFileSync(join(dir, name), `${lines.join('\n')}\n`);
}

/** The kyphoscoliosis example: at risk of hypercapnia (BTS 2017, Table 4), ordered 94-98 %. */
const kypho = (expect: readonly string[], name = 'Kyphoscoliosis'): string[] => [
  `name: ${name}`,
  `request: ${examplePath('order-sign-kyphoscoliosis-standard-target')}`,
  'expect:',
  ...expect,
];

/** The rows of the table: result and case file, in order. */
function rows(stdout: string): { result: string; file: string }[] {
  const lines = stdout.split('\n');
  return lines.flatMap((line, index) => {
    const result = /^(pass|FAIL)\s/.exec(line)?.[1];
    const file = /^\S*\s+\((.+?)\)/.exec(lines[index + 1] ?? '')?.[1];
    return result === undefined || file === undefined ? [] : [{ result, file }];
  });
}

describe('oxygen-order-checker policy test: the example cases', () => {
  it('passes every example case against the preset based on BTS 2017, for which they were written', async () => {
    const run = await runCommandLine(['policy', 'test', BTS, EXAMPLE_CASES]);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const table = rows(run.stdout);
    expect(table.length).toBeGreaterThanOrEqual(5);
    expect(table.every((row) => row.result === 'pass')).toBe(true);
    expect(run.stdout).toContain(`${table.length} passed, 0 failed`);
    expect(run.stdout).toMatch(/^Policy based-on-bts-2017 v\S+ \(sha256 [0-9a-f]{12}\)/);
  });

  it('fails, against the preset based on TSANZ 2015, exactly the cases that depend on the standard range', async () => {
    const dir = tempDir();
    const junit = join(dir, 'report.xml');
    const run = await runCommandLine(['policy', 'test', TSANZ, EXAMPLE_CASES, '--junit', junit]);
    expect(run.code).toBe(1);
    const failed = rows(run.stdout).filter((row) => row.result === 'FAIL').map((row) => row.file).sort();
    // The standard range: BTS 2017 (Tables 1-3) 94-98 %, TSANZ 2015 (Respirology 20:1182) 92-96 %.
    // The at-risk range is 88-92 % in both (BTS 2017, Table 4; TSANZ 2015), so those cases still pass.
    expect(failed).toEqual([
      'lower-range-without-risk-asthma.yaml',
      'pneumonia-above-standard-range.yaml',
      'standard-range-advised-when-missing.yaml',
    ]);
    expect(run.stdout).toContain('what differed: the cards advise a target of 92–96 %; the case expects 94–98 %');
    expect(run.stdout).toContain(
      'what differed: "Target range differs from the policy range" (target-differs-from-policy) was shown (info); the case says it must not be',
    );
    const report = parseXml(readFileSync(junit, 'utf8'));
    const failures = all(report, 'testcase').filter((c) => c.children.some((child) => child.name === 'failure'));
    expect(failures.map((c) => c.attributes['classname']).sort()).toEqual([
      'policy-cases.lower-range-without-risk-asthma',
      'policy-cases.pneumonia-above-standard-range',
      'policy-cases.standard-range-advised-when-missing',
    ]);
  });
});

describe('oxygen-order-checker policy test: pass and fail', () => {
  it('fails a case whose expectation was changed, saying what the cards advise instead', async () => {
    const dir = tempDir();
    const original = readFileSync(join(EXAMPLE_CASES, 'standard-range-advised-when-missing.yaml'), 'utf8');
    // The request path is relative to the case file, so the copy points at the example by absolute path.
    const changed = original
      .replace('../order-sign-face-mask-no-target.json', examplePath('order-sign-face-mask-no-target'))
      .replace('advisedTarget: { lowPercent: 94, highPercent: 98 }', 'advisedTarget: { lowPercent: 92, highPercent: 96 }');
    expect(changed).not.toBe(original);
    writeFileSync(join(dir, 'changed.yaml'), changed);
    const run = await runCommandLine(['policy', 'test', BTS, dir]);
    expect(run.code).toBe(1);
    // BTS 2017, Tables 1-3: 94-98 % for a patient not at risk of hypercapnia.
    expect(run.stdout).toContain('what differed: the cards advise a target of 94–98 %; the case expects 92–96 %');
    expect(run.stdout).toContain('0 passed, 1 failed');
  });

  it('fails a missing expected card, a forbidden card present and a wrong indicator, each in its own words', async () => {
    const dir = tempDir();
    // No raised PaCO2 here, so no acidosis card (BTS 2017 pathway; check-values §3g).
    writeCase(dir, 'a-missing.yaml', kypho(['  cards:', '    - rule: acute-hypercapnic-acidosis', '      indicator: critical'], 'Missing'));
    // At risk of hypercapnia and ordered 94-98 %: the target card is shown (BTS 2017, Table 4).
    writeCase(dir, 'b-forbidden.yaml', kypho(['  absent: [target-above-hypercapnic-range]'], 'Forbidden'));
    // PaCO2 6.7 kPa is hypercapnia (>= 6 kPa, BTS 2017; check-values §3g): the card is critical, not info.
    writeCase(dir, 'c-indicator.yaml', kypho(['  cards:', '    - rule: target-above-hypercapnic-range', '      indicator: info'], 'Indicator'));
    const run = await runCommandLine(['policy', 'test', BTS, dir]);
    expect(run.code).toBe(1);
    expect(rows(run.stdout)).toEqual([
      { result: 'FAIL', file: 'a-missing.yaml' },
      { result: 'FAIL', file: 'b-forbidden.yaml' },
      { result: 'FAIL', file: 'c-indicator.yaml' },
    ]);
    expect(run.stdout).toContain(
      'what differed: expected a critical card "Acute-on-chronic hypercapnic (respiratory) acidosis on the current gas" (acute-hypercapnic-acidosis); it was not shown',
    );
    expect(run.stdout).toContain(
      'what differed: "Target above the range for a patient at risk of hypercapnia" (target-above-hypercapnic-range) was shown (critical); the case says it must not be',
    );
    expect(run.stdout).toContain(
      'what differed: "Target above the range for a patient at risk of hypercapnia" (target-above-hypercapnic-range) was shown as critical; expected info',
    );
  });

  it('allows cards a case does not list, unless it says only: true', async () => {
    const dir = tempDir();
    const expectTarget = ['    - rule: target-above-hypercapnic-range', '      indicator: critical'];
    writeCase(dir, 'open.yaml', kypho(['  cards:', ...expectTarget], 'Open'));
    writeCase(dir, 'only.yaml', kypho(['  only: true', '  cards:', ...expectTarget], 'Only'));
    const run = await runCommandLine(['policy', 'test', BTS, dir]);
    expect(run.code).toBe(1);
    expect(rows(run.stdout)).toEqual([
      { result: 'FAIL', file: 'only.yaml' },
      { result: 'pass', file: 'open.yaml' },
    ]);
    // SpO2 93 % is above 88-92 % on oxygen (BTS 2017, Table 4): a card the exact case did not list.
    expect(run.stdout).toMatch(/what differed: an unexpected warning card "[^"]+" \(spo2-above-target\) was shown; the case lists every card it expects \(only: true\)/);
  });

  it('reports a bad case file as a failing case with its line and column, and still runs the others', async () => {
    const dir = tempDir();
    const secret = 'LBGH-SECRET-0003';
    writeCase(dir, 'good.yaml', kypho(['  cards:', '    - rule: target-above-hypercapnic-range', '      indicator: critical'], 'Good'));
    writeCase(dir, 'bad.yaml', kypho(['  cards:', '    - rule: target-above-hypercapnic-range', `      indicatr: ${secret}`], 'Bad'));
    mkdirSync(join(dir, 'ward-7'));
    writeCase(dir, 'ward-7/broken.yaml', [`name: "${secret}`, 'expect: [']);
    // Hidden folders are skipped (an editor's or a tool's own files); a linked case file is read.
    mkdirSync(join(dir, '.drafts'));
    writeCase(dir, '.drafts/unfinished.yaml', ['name: [']);
    symlinkSync(join(dir, 'good.yaml'), join(dir, 'linked.yaml'));
    const run = await runCommandLine(['policy', 'test', BTS, dir]);
    expect(run.code).toBe(1);
    expect(rows(run.stdout)).toEqual([
      { result: 'FAIL', file: 'bad.yaml' },
      { result: 'pass', file: 'good.yaml' },
      { result: 'pass', file: 'linked.yaml' },
      { result: 'FAIL', file: join('ward-7', 'broken.yaml') },
    ]);
    expect(run.stdout).toContain("what differed: bad.yaml:6:7: expect.cards.0.indicatr: unknown key 'indicatr'; did you mean 'indicator'?");
    expect(run.stdout).toContain('what differed: bad.yaml:5:7: expect.cards.0.indicator: is missing');
    expect(run.stdout).toMatch(/what differed: ward-7\/broken\.yaml:\d+:\d+: \(file\): /);
    expect(run.stdout + run.stderr).not.toContain(secret);
  });
  it('fails a case whose request lacks data the service requires, as the service would answer 412', async () => {
    const dir = tempDir();
    const body = JSON.parse(readFileSync(examplePath('order-sign-kyphoscoliosis-standard-target'), 'utf8')) as {
      prefetch: Record<string, unknown>;
    };
    const keys = Object.keys(body.prefetch);
    body.prefetch = {};
    writeFileSync(join(dir, 'request.json'), JSON.stringify(body));
    writeCase(dir, 'no-prefetch.yaml', [
      'name: No prefetch',
      'request: request.json',
      'evaluateAt: 2026-11-30T09:40:00Z',
      'expect:',
      '  absent: [target-range-missing]',
    ]);
    const run = await runCommandLine(['policy', 'test', BTS, dir]);
    expect(keys.length).toBeGreaterThan(0);
    expect(run.code).toBe(1);
    expect(rows(run.stdout)).toEqual([{ result: 'FAIL', file: 'no-prefetch.yaml' }]);
    expect(run.stdout).toMatch(/what differed: required data is missing from the request's prefetch \(.+\): the service would answer 412/);
  });
});

describe('oxygen-order-checker policy test: the policy is validated first', () => {
  it('refuses an invalid policy with exit 2, naming each problem with its line, and runs no case', async () => {
    const dir = tempDir();
    const junit = join(dir, 'report.xml');
    const policy = join(dir, 'policy.yaml');
    // An at-risk range above the standard range is refused (validation that protects patients).
    const text = readFileSync(BTS, 'utf8').replace('hypercapnicRisk: { lowPercent: 88, highPercent: 92 }', 'hypercapnicRisk: { lowPercent: 96, highPercent: 99 }');
    writeFileSync(policy, text);
    const line = text.split('\n').findIndex((l) => l.includes('lowPercent: 96')) + 1;
    const run = await runCommandLine(['policy', 'test', policy, EXAMPLE_CASES, '--junit', junit]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toContain('the policy is not valid, so no case was run');
    expect(run.stderr).toMatch(new RegExp(`${policy}:${line}:\\d+: targets\\.hypercapnicRisk`));
    expect(existsSync(junit)).toBe(false);
  });
});

describe('oxygen-order-checker policy test: JUnit XML for CI', () => {
  it('writes one testcase per case, failures with what differed, escaped and well-formed', async () => {
    const dir = tempDir();
    const cases = join(dir, 'cases');
    mkdirSync(cases);
    const awkward = `Kypho <&> "quoted" 'single' \u0001 end`;
    writeCase(cases, 'pass.yaml', kypho(['  cards:', '    - rule: target-above-hypercapnic-range', '      indicator: critical'], JSON.stringify(awkward)));
    writeCase(cases, 'fail.yaml', kypho(['  absent: [target-above-hypercapnic-range]'], 'Fails & <tells> why'));
    writeCase(cases, 'invalid.yaml', ['name: Invalid', 'expect: {}']);
    const junit = join(dir, 'report.xml');
    const run = await runCommandLine(['policy', 'test', BTS, cases, '--junit', junit]);
    expect(run.code).toBe(1);
    const report = parseXml(readFileSync(junit, 'utf8'));
    expect(report.name).toBe('testsuites');
    const [suite] = all(report, 'testsuite');
    expect(suite?.attributes).toMatchObject({ tests: '3', failures: '2', errors: '0', timestamp: '2026-12-01T12:00:00' });
    const properties = Object.fromEntries(all(report, 'property').map((p) => [p.attributes['name'], p.attributes['value']]));
    expect(properties['policy.id']).toBe('based-on-bts-2017');
    expect(properties['policy.sha256']).toBe(createHash('sha256').update(readFileSync(BTS)).digest('hex'));

    const byClass = new Map(all(report, 'testcase').map((c) => [c.attributes['classname'], c]));
    expect([...byClass.keys()]).toEqual(['policy-cases.fail', 'policy-cases.invalid', 'policy-cases.pass']);
    // The control character is dropped (XML 1.0 forbids it); the rest comes back exactly.
    expect(byClass.get('policy-cases.pass')?.attributes['name']).toBe(awkward.replace('\u0001', ''));
    expect(byClass.get('policy-cases.pass')?.children).toEqual([]);
    const failure = byClass.get('policy-cases.fail')?.children[0];
    expect(failure?.name).toBe('failure');
    expect(byClass.get('policy-cases.fail')?.attributes['name']).toBe('Fails & <tells> why');
    expect(failure?.attributes).toMatchObject({
      type: 'expectation',
      message:
        '"Target above the range for a patient at risk of hypercapnia" (target-above-hypercapnic-range) was shown (critical); the case says it must not be',
    });
    // BTS 2017, Table 4: 88-92 % for chest wall deformity; critical with PaCO2 6.7 kPa (>= 6 kPa, BTS 2017).
    expect(failure?.text).toContain('got: critical target-above-hypercapnic-range + suggestion, advises 88–92 %');
    const invalid = byClass.get('policy-cases.invalid')?.children[0];
    expect(invalid?.attributes['type']).toBe('invalid-case');
    expect(invalid?.attributes['message']).toMatch(/^invalid\.yaml:1:1: request: is missing$/);
  });

  it('writes a passing run too, with no failure elements', async () => {
    const junit = join(tempDir(), 'report.xml');
    const run = await runCommandLine(['policy', 'test', BTS, EXAMPLE_CASES, '--junit', junit]);
    expect(run.code).toBe(0);
    const report = parseXml(readFileSync(junit, 'utf8'));
    expect(all(report, 'testcase').length).toBe(rows(run.stdout).length);
    expect(all(report, 'failure')).toEqual([]);
  });

  it('escapes every character that could end an attribute or start markup, and multi-line text survives', () => {
    const texts = ['a & b', '<failure>', '"x"', "'y'", 'line one\nline two\ttab\r', '&amp; stays literal', '\uD800 lone surrogate'];
    for (const text of texts) {
      const xml = junitXml({
        name: text,
        timestamp: new Date('2026-12-01T12:00:00Z'),
        properties: { note: text },
        cases: [{ name: text, classname: 'c', failure: { message: text, type: 't', detail: text } }],
      });
      const report = parseXml(xml);
      const expected = text.replace('\uD800', '');
      expect(report.attributes['name']).toBe(expected);
      expect(all(report, 'failure')[0]?.attributes['message']).toBe(expected);
      expect(all(report, 'failure')[0]?.text).toBe(expected);
      expect(escapeXml(text)).not.toMatch(/[<>"']/);
    }
  });

  it('has a checker that refuses XML that is not well-formed (so the checks above can fail)', () => {
    const prolog = '<?xml version="1.0" encoding="UTF-8"?>\n';
    const broken = [
      '<a></a>',
      `${prolog}<a><b></a></b>`,
      `${prolog}<a x="1" x="2"/>`,
      `${prolog}<a x="<"/>`,
      `${prolog}<a>&</a>`,
      `${prolog}<a>&nbsp;</a>`,
      `${prolog}<a/><b/>`,
      `${prolog}<a>`,
      `${prolog}<a x="1></a>`,
      `${prolog}<a>\u0001</a>`,
      `${prolog}text<a/>`,
    ];
    for (const xml of broken) {
      expect(() => parseXml(xml), xml).toThrow();
    }
    expect(parseXml(`${prolog}<a x="&amp;&#10;"><b>t &lt;</b></a>\n`).attributes['x']).toBe('&\n');
  });
});

describe('oxygen-order-checker policy test: usage', () => {
  it('answers --help with exit 0', async () => {
    const run = await runCommandLine(['policy', 'test', '--help']);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('Usage: oxygen-order-checker policy test FILE CASES_DIR [--junit FILE]');
  });

  it('exits 2 for a usage error: arguments missing, an unknown option, a folder that is missing or empty', async () => {
    const empty = tempDir();
    const runs = await Promise.all([
      runCommandLine(['policy', 'test', BTS]),
      runCommandLine(['policy', 'test', BTS, EXAMPLE_CASES, '--junitt', 'x.xml']),
      runCommandLine(['policy', 'test', BTS, join(empty, 'no-such-folder')]),
      runCommandLine(['policy', 'test', BTS, empty]),
    ]);
    expect(runs.map((run) => run.code)).toEqual([2, 2, 2, 2]);
    expect(runs[0]?.stderr).toContain('give a policy FILE and a CASES_DIR');
    expect(runs[2]?.stderr).toContain('cannot read the cases folder');
    expect(runs[3]?.stderr).toContain('no case files (*.yaml)');
  });

  it('makes the JUnit file\u2019s folder when it does not exist yet, as a CI job expects', async () => {
    const junit = join(tempDir(), 'reports', 'nightly', 'r.xml');
    const run = await runCommandLine(['policy', 'test', BTS, EXAMPLE_CASES, '--junit', junit]);
    expect(run.code).toBe(0);
    expect(parseXml(readFileSync(junit, 'utf8'))).toBeDefined();
  });

  it('exits 2 when the JUnit file cannot be written', async () => {
    // The folder named is a file, so neither the folder nor the report can be made.
    const blocker = join(tempDir(), 'not-a-folder');
    writeFileSync(blocker, '');
    const run = await runCommandLine(['policy', 'test', BTS, EXAMPLE_CASES, '--junit', join(blocker, 'r.xml')]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/cannot write .*r\.xml \((ENOTDIR|EEXIST)\)/);
  });
});
