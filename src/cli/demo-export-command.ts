import { existsSync, readdirSync } from 'node:fs';
import { z } from 'zod';
import { writeDemoExport } from '../bulk/write-demo-export.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { checkOptions, parseOptions } from './parse-options.js';

export const DEMO_EXPORT_USAGE = `Usage: oxygen-order-checker demo-export --orders N [--seed S] DIR

Writes an invented FHIR Bulk Data export of the fictional Larkspur Bay General Hospital into DIR (a new
or empty folder): Patient, Encounter, Observation, Condition, MedicationRequest, ServiceRequest and
DeviceRequest as NDJSON (one file per type) and an output.json manifest. N oxygen orders over one
invented month, with the SpO2, respiratory rate, oxygen and blood gas readings before and after each,
for simulate, audit, the demo and benchmarks. Every patient is invented.
  --orders  how many oxygen orders (1 to 10,000,000); files are written as they are made, so any
            size fits in memory
  --seed    a whole number (default 1): the same seed and N give the same files
Exit 0 when written, 1 when DIR could not be written, 2 for a usage error.`;

const DemoExportOptionsSchema = z.strictObject({
  orders: z.string().regex(/^\d+$/, 'must be a whole number').transform(Number).pipe(z.number().int().min(1).max(10_000_000)),
  seed: z.string().regex(/^\d+$/, 'must be a whole number').transform(Number).pipe(z.number().int().max(4_294_967_295)).optional(),
});

export async function runDemoExportCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, { orders: { type: 'string' }, seed: { type: 'string' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${DEMO_EXPORT_USAGE}\n`);
    return 0;
  }
  const [dir, ...extra] = parsed.positionals;
  if (dir === undefined || extra.length > 0) {
    throw new UsageError('give exactly one DIR');
  }
  if (parsed.values['orders'] === undefined) {
    throw new UsageError('--orders is required');
  }
  const options = checkOptions(DemoExportOptionsSchema, { orders: parsed.values['orders'], seed: parsed.values['seed'] });
  if (existsSync(dir) && readdirSync(dir).length > 0) {
    throw new UsageError(`${dir} is not empty: give a new or empty folder, so no earlier export is mixed in`);
  }
  let summary;
  try {
    summary = await writeDemoExport(dir, options.orders, options.seed ?? 1);
  } catch (error) {
    const code = (error as { code?: unknown } | null)?.code;
    io.stderr(`oxygen-order-checker demo-export: cannot write to ${dir}${typeof code === 'string' ? ` (${code})` : ''}\n`);
    return 1;
  }
  const counts = Object.entries(summary.counts)
    .map(([type, count]) => `${type} ${count}`)
    .join(', ');
  io.stdout(`Wrote an invented export of Larkspur Bay General Hospital to ${dir}: ${summary.orders} oxygen orders for ${summary.patients} patients (${counts}).\n`);
  return 0;
}
