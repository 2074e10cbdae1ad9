import { parse as parseYaml } from 'yaml';
import type { Policy, PressureThreshold } from '../core/policy.js';
import { convertKnown } from '../units/convert.js';
import { PolicyFileSchema, type PolicyFile } from './schema.js';

export interface PolicyProblem {
  /** Dot path into the policy file, e.g. `targets.standard.lowPercent`. */
  readonly path: string;
  readonly message: string;
}

export type PolicyParse =
  | { readonly kind: 'ok'; readonly policy: Policy }
  | { readonly kind: 'invalid'; readonly problems: readonly PolicyProblem[] };

function toThreshold(p: { value: number; unit: string }): PressureThreshold {
  const unit = p.unit === 'mmHg' ? 'mm[Hg]' : p.unit;
  return {
    mmHg: convertKnown(p.value, unit, 'mm[Hg]'),
    display: `${p.value} ${unit === 'mm[Hg]' ? 'mmHg' : unit}`,
  };
}

/** Checks that go beyond one field: cross-references the schema cannot express. */
function crossCheck(file: PolicyFile): PolicyProblem[] {
  const problems: PolicyProblem[] = [];
  if (file.references[file.basis] === undefined) {
    problems.push({ path: 'basis', message: `'${file.basis}' is not a key of references` });
  }
  if (file.thresholds.nivPhBelow > file.thresholds.acidosisPhBelow) {
    problems.push({
      path: 'thresholds.nivPhBelow',
      message: 'must not be above thresholds.acidosisPhBelow',
    });
  }
  if (file.thresholds.invasiveVentilationPhBelow > file.thresholds.nivPhBelow) {
    problems.push({
      path: 'thresholds.invasiveVentilationPhBelow',
      message: 'must not be above thresholds.nivPhBelow',
    });
  }
  return problems;
}

function deepFreeze<T>(value: T): T {
  if (value !== null && typeof value === 'object') {
    for (const inner of Object.values(value)) {
      deepFreeze(inner);
    }
    Object.freeze(value);
  }
  return value;
}

/** Validates a parsed policy object and converts it to the core's frozen Policy. Pure. */
export function parsePolicyObject(input: unknown): PolicyParse {
  const parsed = PolicyFileSchema.safeParse(input);
  if (!parsed.success) {
    return {
      kind: 'invalid',
      problems: parsed.error.issues.map((issue) => ({
        path: issue.path.map(String).join('.') || '(root)',
        message: issue.message,
      })),
    };
  }
  const file = parsed.data;
  const problems = crossCheck(file);
  if (problems.length > 0) {
    return { kind: 'invalid', problems };
  }
  const policy: Policy = {
    id: file.id,
    version: file.version,
    title: file.title,
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
  };
  return { kind: 'ok', policy: deepFreeze(policy) };
}

/** Parses policy YAML (or JSON, which is YAML) text. Pure: reading the file is the caller's job. */
export function parsePolicyText(text: string): PolicyParse {
  let raw: unknown;
  try {
    raw = parseYaml(text, { prettyErrors: true });
  } catch (error) {
    const message = error instanceof Error ? error.message.split('\n')[0] : 'unreadable YAML';
    return { kind: 'invalid', problems: [{ path: '(file)', message: message ?? 'unreadable YAML' }] };
  }
  return parsePolicyObject(raw);
}

