import type { z } from 'zod';
import type { Policy, PressureThreshold } from '../core/policy.js';
import { convertKnown } from '../units/convert.js';
import { checkPolicy, type PolicyCheck, type PolicyPath } from './check-policy.js';
import { toDeviceCatalogue } from './device-catalogue.js';
import { locateDocument, type TextPosition } from './locate.js';
import { nearest } from './rule-ids.js';
import { PolicyFileSchema, type Acknowledgement, type PolicyFile } from './schema.js';

/**
 * Validation of a policy file: the strict schema, then the checks that protect patients
 * (check-policy.ts). Every problem is collected, each with its path, what is wrong, how to fix it and,
 * when the text is at hand, its line and column. Errors refuse the file; warnings are shown and the
 * file is used.
 */

export interface PolicyProblem {
  /** Dot path into the policy file, e.g. `targets.standard.lowPercent`; `(root)` or `(file)` for the whole. */
  readonly path: string;
  /** What is wrong. */
  readonly message: string;
  /** How to put it right. */
  readonly fix?: string;
  /** 1-based line and column of the key or list item at fault (see locate.ts); absent without text. */
  readonly line?: number;
  readonly column?: number;
}

export type PolicyAcknowledgement = Readonly<Acknowledgement>;

export type PolicyParse =
  | {
      readonly kind: 'ok';
      readonly policy: Policy;
      readonly warnings: readonly PolicyProblem[];
      /** Critical rules the file switches off or lowers, each with the committee's recorded reason. */
      readonly acknowledgements: readonly PolicyAcknowledgement[];
    }
  | {
      readonly kind: 'invalid';
      readonly problems: readonly PolicyProblem[];
      readonly warnings: readonly PolicyProblem[];
    };

function toThreshold(p: { value: number; unit: string }): PressureThreshold {
  const unit = p.unit === 'mmHg' ? 'mm[Hg]' : p.unit;
  return {
    mmHg: convertKnown(p.value, unit, 'mm[Hg]'),
    display: `${p.value} ${unit === 'mm[Hg]' ? 'mmHg' : unit}`,
  };
}

const DOCS = 'docs/policy.md lists every key';

/**
 * The keys the schema allows at a path, for "did you mean" on an unknown key. Walks zod 4's schema
 * definitions (`_zod.def`, the introspection zod 4 offers to libraries), through defaults, optionals
 * and pipes; any other shape gives no suggestion rather than a wrong one.
 */
function knownKeys(path: readonly PropertyKey[]): string[] {
  interface Def {
    readonly type: string;
    readonly shape?: Record<string, { _zod: { def: Def } }>;
    readonly innerType?: { _zod: { def: Def } };
    readonly valueType?: { _zod: { def: Def } };
    readonly element?: { _zod: { def: Def } };
    readonly in?: { _zod: { def: Def } };
  }
  const unwrap = (def: Def): Def => {
    const inner = def.innerType ?? def.in;
    return inner === undefined ? def : unwrap(inner._zod.def);
  };
  let def = unwrap((PolicyFileSchema as unknown as { _zod: { def: Def } })._zod.def);
  for (const step of path) {
    const next =
      def.type === 'object'
        ? def.shape?.[String(step)]
        : def.type === 'record'
          ? def.valueType
          : def.type === 'array'
            ? def.element
            : undefined;
    if (next === undefined) return [];
    def = unwrap(next._zod.def);
  }
  return def.type === 'object' && def.shape !== undefined ? Object.keys(def.shape) : [];
}

function valueAt(raw: unknown, path: readonly PropertyKey[]): unknown {
  let value = raw;
  for (const step of path) {
    if (value === null || typeof value !== 'object') return undefined;
    value = (value as Record<PropertyKey, unknown>)[step];
  }
  return value;
}

/**
 * The value at fault, as the message names it. A list or mapping is named by its kind, never printed,
 * and a whole file that is not a mapping is described, not quoted: a file passed by mistake (a list
 * of passwords, a token) must not be echoed to a terminal or a log.
 */
function shown(value: unknown, path: readonly PropertyKey[] = ['(key)']): string {
  if (Array.isArray(value)) return 'a list';
  if (value !== null && typeof value === 'object') return 'a mapping';
  if (path.length === 0) return typeof value === 'string' ? 'text' : `a ${typeof value}`;
  return typeof value === 'string' ? `'${value}'` : String(value);
}

/** Schema issues in the committee's terms: one problem per unknown key, each with a fix. */
function schemaChecks(raw: unknown, issues: readonly z.core.$ZodIssue[]): PolicyCheck[] {
  return issues.flatMap((issue): PolicyCheck[] => {
    const path = issue.path.map((step) => (typeof step === 'symbol' ? String(step) : step));
    const value = valueAt(raw, path);
    switch (issue.code) {
      case 'unrecognized_keys': {
        const known = knownKeys(path);
        return issue.keys.map((key) => {
          const guess = nearest(key, known);
          return {
            level: 'error',
            path: [...path, key],
            message: `unknown key '${key}'`,
            fix: guess === undefined ? `remove it; ${DOCS}` : `did you mean '${guess}'? ${DOCS}`,
          };
        });
      }
      case 'invalid_type':
        return [
          value === undefined
            ? { level: 'error', path, message: 'is missing', fix: `add it; ${DOCS}, with the bundled value` }
            : { level: 'error', path, message: `is ${shown(value, path)}; expected ${issue.expected}`, fix: DOCS },
        ];
      case 'too_small':
        return [
          {
            level: 'error',
            path,
            message: `is ${shown(value)}; ${issue.message}`,
            fix: `use a value of at least ${String(issue.minimum)}`,
          },
        ];
      case 'too_big':
        return [
          {
            level: 'error',
            path,
            message: `is ${shown(value)}; ${issue.message}`,
            fix: `use a value of at most ${String(issue.maximum)}`,
          },
        ];
      case 'invalid_value': {
        const allowed = issue.values.map(String);
        const guess = typeof value === 'string' ? nearest(value, allowed) : undefined;
        return [
          {
            level: 'error',
            path,
            message: `is ${shown(value)}; not one of the accepted values`,
            fix: guess === undefined ? `use one of: ${allowed.join(', ')}` : `did you mean '${guess}'?`,
          },
        ];
      }
      case 'custom':
      case 'invalid_element':
      case 'invalid_format':
      case 'invalid_key':
      case 'invalid_union':
      case 'not_multiple_of':
        return [{ level: 'error', path, message: issue.message, fix: DOCS }];
    }
  });
}

const dotted = (path: PolicyPath): string => path.map(String).join('.') || '(root)';

function toProblem(check: PolicyCheck, locate?: (path: PolicyPath) => TextPosition): PolicyProblem {
  const base = { path: dotted(check.path), message: check.message, fix: check.fix };
  return locate === undefined ? base : { ...base, ...lineAndColumn(locate(check.path)) };
}

/** Top to bottom, as a reader fixes them; stable, so problems without a position keep their order. */
function inFileOrder(problems: PolicyProblem[]): PolicyProblem[] {
  return problems.sort((a, b) => (a.line ?? 0) - (b.line ?? 0) || (a.column ?? 0) - (b.column ?? 0));
}

const lineAndColumn = (p: TextPosition): { line: number; column: number } => ({ line: p.line, column: p.column });

function deepFreeze<T>(value: T): T {
  if (value !== null && typeof value === 'object') {
    for (const inner of Object.values(value)) {
      deepFreeze(inner);
    }
    Object.freeze(value);
  }
  return value;
}

/** The sections on what cards cite and say (card-sections-schema.ts); the primary guideline listed first. */
function cardSections(file: PolicyFile): Pick<Policy, 'clinicalBasis' | 'cardWording' | 'overrideReasons'> {
  const basis = file.clinicalBasis;
  return {
    clinicalBasis: {
      guidelineKeys: [file.basis, ...(basis?.guidelines ?? []).filter((key) => key !== file.basis)],
      ruleCitations: basis?.ruleCitations ?? {},
      topicCitations: basis?.topicCitations ?? {},
    },
    cardWording: { folder: file.cardWording.folder },
    overrideReasons: file.overrideReasons,
  };
}

function validate(input: unknown, locate?: (path: PolicyPath) => TextPosition): PolicyParse {
  const parsed = PolicyFileSchema.safeParse(input);
  const checks = [...(parsed.success ? [] : schemaChecks(input, parsed.error.issues)), ...checkPolicy(input)];
  const problems = inFileOrder(checks.filter((c) => c.level === 'error').map((c) => toProblem(c, locate)));
  const warnings = inFileOrder(checks.filter((c) => c.level === 'warning').map((c) => toProblem(c, locate)));
  if (!parsed.success || problems.length > 0) {
    return { kind: 'invalid', problems, warnings };
  }
  const file = parsed.data;
  const policy: Policy = {
    id: file.id,
    version: file.version,
    title: file.title,
    effectiveFrom: file.effectiveFrom,
    basisKey: file.basis,
    site: {
      name: file.site.name,
      altitudeM: file.site.altitudeM,
      barometricPressureMmHg:
        file.site.barometricPressure === undefined
          ? undefined
          : toThreshold(file.site.barometricPressure).mmHg,
      timeZone: file.site.timeZone,
    },
    targets: file.targets,
    units: file.units.map((unit) => ({
      name: unit.name,
      match: unit.match,
      targets: { standard: unit.targets.standard, hypercapnicRisk: unit.targets.hypercapnicRisk },
      basisKey: unit.basis,
    })),
    hypercapnicRisk: {
      conditions: file.hypercapnicRisk.conditions,
      hypercapniaPaco2: toThreshold(file.hypercapnicRisk.hypercapniaPaco2AtLeast),
      chronicBicarbonateAboveMmolPerL: file.hypercapnicRisk.chronicBicarbonateAboveMmolPerL,
      morbidObesityBmiAbove: file.hypercapnicRisk.morbidObesityBmiAbove,
      acuteHypercapniaWithoutRiskTarget: file.hypercapnicRisk.acuteHypercapniaWithoutRiskTarget,
    },
    population: file.population,
    specialConditions: file.specialConditions,
    freshness: file.freshness,
    thresholds: {
      ...file.thresholds,
      nivPaco2Above: toThreshold(file.thresholds.nivPaco2Above),
    },
    titrationReview: file.titrationReview,
    devices: toDeviceCatalogue(file.devices),
    severity: file.severity,
    disabledRules: file.disabledRules,
    references: Object.fromEntries(
      Object.entries(file.references).map(([key, ref]) => [
        key,
        ref.url === undefined
          ? { label: ref.label, citation: ref.citation }
          : { label: ref.label, citation: ref.citation, url: ref.url },
      ]),
    ),
    cautions: [file.cautions.advisoryOnly, file.cautions.pulseOximetry, ...file.cautions.more],
    ...cardSections(file),
  };
  return { kind: 'ok', policy: deepFreeze(policy), warnings, acknowledgements: deepFreeze(file.acknowledgements) };
}

/** Validates a parsed policy object and converts it to the core's frozen Policy. Pure; no positions. */
export function parsePolicyObject(input: unknown): PolicyParse {
  return validate(input);
}

/** Parses policy YAML (or JSON, which is YAML) text, with the line and column of every problem. Pure. */
export function parsePolicyText(text: string): PolicyParse {
  const doc = locateDocument(text);
  if (doc.syntaxErrors.length > 0) {
    return {
      kind: 'invalid',
      problems: doc.syntaxErrors.map((e) => ({
        path: '(file)',
        message: e.message,
        fix: 'correct the YAML at this line',
        ...lineAndColumn(e.position),
      })),
      warnings: [],
    };
  }
  return validate(doc.value, doc.locate);
}
