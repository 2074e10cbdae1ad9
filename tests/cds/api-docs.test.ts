import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseCardTemplate } from '../../src/cds/card-templates.js';
import { PREFETCH_KEYS } from '../../src/cds/services.js';
import { RULES } from '../../src/core/rules/index.js';
import { expectConformant } from '../helpers/card-conformance.js';

// docs/api.md is kept in step with the code: its example must still conform, and its tables must
// name every rule, prefetch key and override-reason code there is.
const doc = readFileSync(new URL('../../docs/api.md', import.meta.url), 'utf8');

function tableCodes(afterHeading: string): string[] {
  const start = doc.indexOf(afterHeading);
  expect(start).toBeGreaterThan(-1);
  const lines = doc.slice(start).split('\n');
  const table = lines.slice(lines.findIndex((l) => l.startsWith('|')));
  return table
    .slice(0, table.findIndex((l) => !l.startsWith('|')))
    .map((l) => /^\| `([^`]+)`/.exec(l)?.[1])
    .filter((c): c is string => c !== undefined);
}

describe('docs/api.md', () => {
  it('holds an example response that passes the checklist and the R4 schema', () => {
    const block = /<!-- example-response -->\n```json\n([\s\S]*?)\n```/.exec(doc);
    expect(block).not.toBeNull();
    expectConformant(JSON.parse(block?.[1] ?? 'null'));
  });

  it('lists every registered rule, in registry order', () => {
    expect(tableCodes('| Rule id')).toStrictEqual(RULES.map((rule) => rule.id));
  });

  it('lists every prefetch key', () => {
    expect(tableCodes('| Key | Template')).toStrictEqual(Object.keys(PREFETCH_KEYS));
  });

  it('lists exactly the override-reason codes the card templates use', () => {
    const dir = new URL('../../cards/', import.meta.url);
    const codes = new Set<string>();
    for (const name of readdirSync(dir).filter((n) => n.endsWith('.yaml'))) {
      const parsed = parseCardTemplate(readFileSync(new URL(name, dir), 'utf8'));
      for (const reason of parsed.kind === 'ok' ? parsed.template.overrideReasons : []) {
        codes.add(reason.code);
      }
    }
    expect(tableCodes('| Code | Display')).toStrictEqual([...codes].sort());
  });
});
