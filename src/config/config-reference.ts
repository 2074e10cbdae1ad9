import { relative } from 'node:path';
import type { z } from 'zod';
import { CONFIG_PREFIX, ENV_DEFAULTS, EnvSchema, RETIRED_PREFIX, type VariableMeta } from './env-config.js';
import { PACKAGE_ROOT } from './package-root.js';
import { REVIEW_VARIABLES } from './review-config.js';
import { VARIABLE_DOCS, VARIABLE_GROUPS, type SecretKind, type VariableDoc, type VariableGroup } from './variable-docs.js';

/**
 * The configuration reference (docs/configuration.md), generated from the parsers and VARIABLE_DOCS.
 * Every variable a parser reads is listed, including one added to env-config.ts later: it needs only
 * its entry in VARIABLE_DOCS, and until it has one the reference is incomplete and says which.
 */

export interface ConfigVariable {
  readonly name: string;
  readonly group: VariableGroup;
  readonly meta: VariableMeta | undefined;
  /** The type column: `integer 1–100`, `true or false`, `one of a, b`, or the doc's format. */
  readonly type: string;
  readonly defaultText: string;
  readonly unit: string;
  readonly description: string;
  readonly secret: SecretKind | undefined;
}

export type ConfigReference =
  | { readonly kind: 'ok'; readonly variables: readonly ConfigVariable[] }
  | { readonly kind: 'incomplete'; readonly problems: readonly string[] };

/** Where the reference reads from; the defaults are the service's own, tests pass others. */
export interface ReferenceSources {
  readonly schemaShape: Readonly<Record<string, z.ZodType>>;
  readonly otherVariables: readonly string[];
  readonly defaults: Readonly<Record<string, unknown>>;
  readonly docs: Readonly<Record<string, VariableDoc>>;
  readonly packageRoot: string;
}

export const SERVICE_SOURCES: ReferenceSources = {
  schemaShape: EnvSchema.shape,
  otherVariables: REVIEW_VARIABLES,
  defaults: ENV_DEFAULTS,
  docs: VARIABLE_DOCS,
  packageRoot: PACKAGE_ROOT,
};

const DOCS_FILE = 'src/config/variable-docs.ts';

const UNIT_SUFFIXES: readonly (readonly [string, string])[] = [
  ['_MS', 'milliseconds'],
  ['_S', 'seconds'],
  ['_BYTES', 'bytes'],
  ['_DAYS', 'days'],
  ['_MIN', 'minutes'],
];

interface Inspected {
  readonly meta: VariableMeta | undefined;
  readonly choices: readonly string[] | undefined;
}

/** The meta a parser carries (on it, or on the input side of a pipe) and any enum it ends in. */
function inspect(schema: z.ZodType): Inspected {
  let meta: VariableMeta | undefined;
  let choices: readonly string[] | undefined;
  let current: z.ZodType | undefined = schema;
  while (current !== undefined) {
    meta ??= current.meta() as VariableMeta | undefined;
    const def = current._zod.def as { type: string; in?: z.ZodType; out?: z.ZodType };
    if (def.type !== 'pipe') {
      break;
    }
    const out = def.out as { _zod: { def: { type: string; entries?: Record<string, string> } } } | undefined;
    if (out?._zod.def.type === 'enum' && out._zod.def.entries !== undefined) {
      choices = Object.values(out._zod.def.entries);
    }
    current = def.in;
  }
  return { meta, choices };
}

function unitOf(name: string, doc: VariableDoc): string {
  return doc.unit ?? UNIT_SUFFIXES.find(([suffix]) => name.endsWith(suffix))?.[1] ?? '';
}

function typeOf(meta: VariableMeta | undefined, choices: readonly string[] | undefined, doc: VariableDoc): string {
  if (choices !== undefined) {
    return `one of ${choices.map((c) => `\`${c}\``).join(', ')}`;
  }
  if (doc.format !== undefined) {
    return doc.format;
  }
  switch (meta?.kind) {
    case 'integer':
      return `whole number ${String(meta.min)}–${String(meta.max)}`;
    case 'boolean':
      return '`true` or `false`';
    case 'text':
    case undefined:
      return 'text';
  }
}

function defaultOf(meta: VariableMeta | undefined, doc: VariableDoc, packageRoot: string): string {
  if (doc.defaultText !== undefined) {
    return doc.defaultText;
  }
  if (meta === undefined || meta.default === '') {
    return 'none';
  }
  if (typeof meta.default === 'string' && meta.default.startsWith(packageRoot)) {
    // A bundled path is absolute on each machine; the reader needs where it is in the package.
    return `\`${relative(packageRoot, meta.default)}/\` (bundled)`;
  }
  return `\`${String(meta.default)}\``;
}

/** A meta for a variable known only from the defaults object (no parser found for it). */
function metaFromDefault(value: unknown): VariableMeta | undefined {
  if (typeof value === 'boolean') {
    return { kind: 'boolean', default: value };
  }
  if (typeof value === 'string') {
    return { kind: 'text', default: value };
  }
  return undefined;
}

/** Every variable read, documented, by group and then in VARIABLE_DOCS order; or what is missing. */
export function buildConfigReference(sources: ReferenceSources = SERVICE_SOURCES): ConfigReference {
  const names = [...new Set([...Object.keys(sources.schemaShape), ...sources.otherVariables, ...Object.keys(sources.defaults)])];
  const problems: string[] = [];
  const variables: ConfigVariable[] = [];
  for (const name of names) {
    const doc = sources.docs[name];
    if (doc === undefined || doc.description.trim() === '') {
      problems.push(`${name} has no description: add an entry for it to VARIABLE_DOCS in ${DOCS_FILE}, then run npm run docs:config`);
      continue;
    }
    const schema = sources.schemaShape[name];
    const inspected: Inspected = schema === undefined ? { meta: undefined, choices: undefined } : inspect(schema);
    const meta = inspected.meta ?? doc.meta ?? metaFromDefault(sources.defaults[name]);
    if (meta === undefined && inspected.choices === undefined) {
      problems.push(`${name} has no type or default the reference can read: give its entry in ${DOCS_FILE} a meta`);
      continue;
    }
    variables.push({
      name,
      group: doc.group,
      meta,
      type: typeOf(meta, inspected.choices, doc),
      defaultText: defaultOf(meta, doc, sources.packageRoot),
      unit: unitOf(name, doc),
      description: doc.description.trim(),
      secret: doc.secret,
    });
  }
  for (const name of Object.keys(sources.docs)) {
    if (!names.includes(name)) {
      problems.push(`${name} is described in ${DOCS_FILE} but no parser reads it: remove its entry`);
    }
  }
  if (problems.length > 0) {
    return { kind: 'incomplete', problems };
  }
  const listed = Object.keys(sources.docs);
  const order = (v: ConfigVariable): number => VARIABLE_GROUPS.indexOf(v.group);
  variables.sort((a, b) => order(a) - order(b) || listed.indexOf(a.name) - listed.indexOf(b.name));
  return { kind: 'ok', variables };
}

function cell(text: string): string {
  return text.replaceAll('|', '\\|').replaceAll('\n', ' ');
}

function secretCell(v: ConfigVariable): string {
  switch (v.secret) {
    case 'file':
      return 'names a secret file';
    case 'value':
      return `secret; or \`${v.name}_FILE\``;
    case undefined:
      return '';
  }
}

/** docs/configuration.md: an introduction, then one table per group. */
export function renderConfigReference(variables: readonly ConfigVariable[]): string {
  const lines: string[] = [
    '# Configuration reference',
    '',
    '<!-- Generated by `npm run docs:config` from src/config/env-config.ts, review-config.ts and',
    '     variable-docs.ts. Do not edit by hand: tests/config/config-reference.test.ts fails when this',
    '     file is out of date. -->',
    '',
    'The service reads these environment variables once, at start, checks them all and lists every',
    'problem before it refuses to start. An unset or empty variable takes its default. Any other',
    `variable starting with \`${CONFIG_PREFIX}\` is refused, with the nearest known name suggested, so a`,
    `misspelt setting never falls back to its default silently; so is one left with the prefix`,
    `\`${RETIRED_PREFIX}\` of versions before 0.2. Relative paths are resolved against the working directory.`,
    '',
    'Secrets: a variable marked "names a secret file" takes the path of a file holding the secret',
    '(at least 32 random bytes, mode 0600, or the service refuses to start); mount it from your secret',
    'store (docs/deployment.md). A variable marked "secret; or `NAME_FILE`" may instead be given as',
    'the path of a file holding its value, in the variable of the same name with `_FILE` appended.',
    '',
  ];
  for (const group of VARIABLE_GROUPS) {
    const inGroup = variables.filter((v) => v.group === group);
    if (inGroup.length === 0) {
      continue;
    }
    lines.push(`## ${group}`, '', '| Variable | Type | Default | Unit | Secret | Meaning |', '|---|---|---|---|---|---|');
    for (const v of inGroup) {
      lines.push(
        `| \`${v.name}\` | ${cell(v.type)} | ${cell(v.defaultText)} | ${cell(v.unit)} | ${cell(secretCell(v))} | ${cell(v.description)} |`,
      );
    }
    lines.push('');
  }
  return lines.join('\n');
}
