import { createHash } from 'node:crypto';
import { statSync, writeFileSync } from 'node:fs';
import { z } from 'zod';
import { renderAuditReport } from '../audit/audit-report.js';
import { auditJson, renderAuditTable } from '../audit/audit-text.js';
import { ExportCollector } from '../audit/collect-patients.js';
import { exportFiles } from '../bulk/export-index.js';
import { describeNdjsonProblem, NdjsonProblems, readNdjsonFile } from '../bulk/ndjson-reader.js';
import { auditWards, exportPeriod } from '../core/audit/audit-wards.js';
import type { AuditPeriod } from '../core/audit/types.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { DEFAULT_POLICY_PATH, loadPolicy } from './load-policy.js';
import { checkOptions, parseOptions } from './parse-options.js';

export const AUDIT_USAGE = `Usage: oxygen-order-checker audit EXPORT_DIR [--policy FILE] [--from DATE --to DATE]
                   [--json FILE|-] [--html FILE]

The figures a hospital oxygen audit collects, per ward and overall, from a FHIR Bulk Data export
(NDJSON files: Patient, Encounter, Observation, Condition, and oxygen orders as MedicationRequest,
ServiceRequest or DeviceRequest): patients on oxygen; of these, with an order; orders with a target
range; ranges the patient's risk calls for; at-risk patients on the standard range; SpO2 time in,
above (on oxygen) and below the range. Definitions: docs/policy.md, "Audit your wards".
  --policy  the policy whose targets and risk rules judge the orders (default: bundled BTS 2017)
  --from/--to  the audit period (ISO 8601 date or date-time; default: the whole export)
  --json    write the figures as JSON to FILE, or to stdout with -
  --html    write a self-contained HTML report with charts to FILE
Exit 0 when the audit ran, 1 when the export cannot be read, 2 for a usage error.
Advisory only: an audit of recorded data; local policy and clinical judgement govern.`;

const dateText = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}(T[\d:.]+(Z|[+-]\d{2}:\d{2})?)?$/, 'must be an ISO 8601 date or date-time')
  .refine((s) => !Number.isNaN(Date.parse(s)), 'must be a real date');

const AuditOptionsSchema = z.strictObject({
  policy: z.string().optional(),
  from: dateText.optional(),
  to: dateText.optional(),
  json: z.string().min(1).optional(),
  html: z.string().min(1).optional(),
});

/** A date alone means its whole day: `--to 2026-11-30` runs to the end of 30 November (UTC). */
function periodEnd(text: string): string {
  return /^\d{4}-\d{2}-\d{2}$/.test(text) ? `${text}T23:59:59.999Z` : new Date(text).toISOString();
}

function choosePeriod(o: { readonly from?: string | undefined; readonly to?: string | undefined }, whole: AuditPeriod | undefined): AuditPeriod | undefined {
  const from = o.from === undefined ? whole?.from : new Date(o.from).toISOString();
  const to = o.to === undefined ? whole?.to : periodEnd(o.to);
  if (from === undefined || to === undefined) {
    return undefined;
  }
  if (Date.parse(from) > Date.parse(to)) {
    throw new UsageError('--from must not be after --to');
  }
  return { from, to };
}

function write(path: string, text: string, what: string): void {
  try {
    writeFileSync(path, text);
  } catch {
    throw new UsageError(`cannot write the ${what} file ${path}`);
  }
}

export async function runAuditCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, {
    policy: { type: 'string' },
    from: { type: 'string' },
    to: { type: 'string' },
    json: { type: 'string' },
    html: { type: 'string' },
  });
  if (parsed.values['help'] === true) {
    io.stdout(`${AUDIT_USAGE}\n`);
    return 0;
  }
  const [dir, ...extra] = parsed.positionals;
  if (dir === undefined || extra.length > 0) {
    throw new UsageError('give one EXPORT_DIR');
  }
  const o = checkOptions(AuditOptionsSchema, {
    policy: parsed.values['policy'],
    from: parsed.values['from'],
    to: parsed.values['to'],
    json: parsed.values['json'],
    html: parsed.values['html'],
  });
  const policy = loadPolicy(o.policy, io);
  const isDir = ((): boolean => {
    try {
      return statSync(dir).isDirectory();
    } catch {
      return false;
    }
  })();
  if (!isDir) {
    io.stderr(`oxygen-order-checker audit: ${dir} is not a directory\n`);
    return 1;
  }
  const collector = new ExportCollector();
  const files = exportFiles(dir);
  const problems = new NdjsonProblems();
  for (const file of files) {
    for await (const { resource } of readNdjsonFile(file, problems)) {
      collector.add(resource);
    }
  }
  if (files.length === 0) {
    io.stderr(`oxygen-order-checker audit: no .ndjson files in ${dir}\n`);
    return 1;
  }
  const { patients, skipped } = collector.finish(policy, io.now());
  const period = choosePeriod(o, exportPeriod(patients));
  if (period === undefined) {
    io.stderr('oxygen-order-checker audit: the export holds no dated records, so there is no period to audit\n');
    return 1;
  }
  const figures = auditWards(patients, period, policy);
  // The file's hash, as on cards and log lines, so an edited file that kept its id and version is told apart.
  const contentSha256 = createHash('sha256').update(io.readFile(o.policy ?? DEFAULT_POLICY_PATH)).digest('hex');
  const about = {
    policy: { id: policy.id, version: policy.version, contentSha256 },
    source: { files: files.length, resourcesNotUsed: skipped, malformedLines: problems.count },
  };
  const policyLabel = `${policy.id} v${policy.version} ${contentSha256.slice(0, 12)}`;
  const jsonText = `${JSON.stringify(auditJson(figures, about), null, 2)}\n`;
  const notes = [
    ...(skipped > 0 ? [`${skipped} resources not used (no patient named, or a type the audit does not read)`] : []),
    ...(problems.count > 0
      ? [`${problems.count} lines were not FHIR resources and were skipped (first: ${problems.first.slice(0, 3).map(describeNdjsonProblem).join('; ')})`]
      : []),
  ].map((n) => `Note: ${n}\n`);
  if (o.json === '-') {
    io.stdout(jsonText);
    io.stderr(notes.join(''));
  } else {
    io.stdout(`Oxygen audit ${period.from} to ${period.to} (policy ${policyLabel})\n\n`);
    io.stdout(renderAuditTable(figures));
    io.stdout(notes.join(''));
    io.stdout('Advisory only: an audit of recorded data; local policy and clinical judgement govern.\n');
    if (o.json !== undefined) {
      write(o.json, jsonText, 'JSON');
    }
  }
  if (o.html !== undefined) {
    const page = renderAuditReport({
      figures,
      policy: { label: policyLabel, siteName: policy.site.name },
      madeAt: io.now().toISOString(),
    });
    write(o.html, page, 'HTML');
  }
  return 0;
}
