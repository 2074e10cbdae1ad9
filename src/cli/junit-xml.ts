/**
 * A JUnit XML report (the testsuite/testcase/failure elements CI servers read), written by hand: the
 * format is small and the project carries no XML library. Every text and attribute is escaped, and
 * characters XML 1.0 does not allow are dropped, so a case name can never break the file.
 */

export interface JunitCase {
  readonly name: string;
  readonly classname: string;
  /** Absent when the case passed. */
  readonly failure?: { readonly message: string; readonly type: string; readonly detail: string };
}

export interface JunitSuite {
  readonly name: string;
  readonly timestamp: Date;
  readonly properties: Readonly<Record<string, string>>;
  readonly cases: readonly JunitCase[];
}

/** Characters XML 1.0 forbids (section 2.2): C0 controls other than tab, newline and return; lone surrogates; U+FFFE/FFFF. */
// eslint-disable-next-line no-control-regex
const NOT_XML = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g;

/** Escapes text for an attribute value or element content. */
export function escapeXml(text: string): string {
  return text
    .replace(NOT_XML, '')
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&apos;')
    // Kept as references so an attribute keeps its line breaks (XML normalises literal ones to spaces).
    .replace(/\n/g, '&#10;')
    .replace(/\r/g, '&#13;')
    .replace(/\t/g, '&#9;');
}

const attributes = (values: Readonly<Record<string, string | number>>): string =>
  Object.entries(values)
    .map(([key, value]) => ` ${key}="${escapeXml(String(value))}"`)
    .join('');

export function junitXml(suite: JunitSuite): string {
  const failures = suite.cases.filter((c) => c.failure !== undefined).length;
  const counts = { tests: suite.cases.length, failures, errors: 0, skipped: 0 };
  const properties = Object.entries(suite.properties)
    .map(([name, value]) => `      <property${attributes({ name, value })}/>\n`)
    .join('');
  const cases = suite.cases
    .map((c) => {
      const open = `    <testcase${attributes({ name: c.name, classname: c.classname })}`;
      if (c.failure === undefined) return `${open}/>\n`;
      const { message, type, detail } = c.failure;
      return `${open}>\n      <failure${attributes({ message, type })}>${escapeXml(detail)}</failure>\n    </testcase>\n`;
    })
    .join('');
  return (
    '<?xml version="1.0" encoding="UTF-8"?>\n' +
    `<testsuites${attributes({ name: suite.name, ...counts })}>\n` +
    `  <testsuite${attributes({ name: suite.name, ...counts, timestamp: suite.timestamp.toISOString().replace(/\.\d+Z$/, '') })}>\n` +
    (properties === '' ? '' : `    <properties>\n${properties}    </properties>\n`) +
    cases +
    '  </testsuite>\n' +
    '</testsuites>\n'
  );
}
