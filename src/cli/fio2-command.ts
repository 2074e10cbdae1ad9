import { z } from 'zod';
import { DEVICE_MODELS, estimateDelivery } from '../core/devices/index.js';
import { DEVICE_KINDS } from '../core/types.js';
import type { CliIo, ExitCode } from './cli-io.js';
import { FIO2_CONVENTION, fio2Text } from './fio2-option.js';
import { checkOptions, numberText, parseOptions } from './parse-options.js';

export const FIO2_USAGE = `Usage: oxygen-order-checker fio2 --device KIND [--flow L_PER_MIN] [--setting FIO2] [--resp-rate N] [--json]

Estimates the FiO2 a delivery device really gives, with its low-high range and notes.
KIND is one of: ${DEVICE_KINDS.join(', ')}.
  --flow       oxygen flow in L/min (for high-flow nasal cannula: the total flow)
  --setting    a set FiO2 (the Venturi setting, or the high-flow / NIV blender setting):
               ${FIO2_CONVENTION}
  --resp-rate  respiratory rate per minute; drives the patient's inspiratory demand
  --json       print JSON for scripts`;

const Fio2OptionsSchema = z.strictObject({
  device: z.enum(DEVICE_KINDS, { error: `must be one of ${DEVICE_KINDS.join(', ')}` }),
  flow: numberText.pipe(z.number().min(0).max(80)).optional(),
  setting: fio2Text.optional(),
  respRate: numberText.pipe(z.number().min(1).max(80)).optional(),
  json: z.boolean().optional(),
});

function round(value: number, places: number): number {
  const factor = 10 ** places;
  return Math.round(value * factor) / factor;
}

export function runFio2Command(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, {
    device: { type: 'string' },
    flow: { type: 'string' },
    setting: { type: 'string' },
    'resp-rate': { type: 'string' },
    json: { type: 'boolean' },
  });
  if (parsed.values['help'] === true) {
    io.stdout(`${FIO2_USAGE}\n`);
    return 0;
  }
  const options = checkOptions(Fio2OptionsSchema, {
    device: parsed.values['device'],
    flow: parsed.values['flow'],
    setting: parsed.values['setting'],
    respRate: parsed.values['resp-rate'],
    json: parsed.values['json'],
  });
  const input = {
    ...(options.flow === undefined ? {} : { flowLPerMin: options.flow }),
    // Typed as a fraction or a percentage (fio2-option.ts); the core takes the fraction.
    ...(options.setting === undefined ? {} : { setFio2Fraction: options.setting }),
    ...(options.respRate === undefined ? {} : { respRatePerMin: options.respRate }),
  };
  const model = DEVICE_MODELS[options.device];
  const outcome = estimateDelivery(options.device, input);
  if (outcome.kind === 'unknown') {
    const missing = outcome.missing === undefined ? '' : ` (needs: ${outcome.missing.join(', ')})`;
    if (options.json === true) {
      io.stdout(`${JSON.stringify({ device: options.device, fio2: null, reason: outcome.reason }, null, 2)}\n`);
    } else {
      io.stdout(`${model.label}: cannot estimate the FiO2: ${outcome.reason}${missing}\n`);
    }
    return 1;
  }
  const e = outcome.value;
  const result = {
    device: options.device,
    label: model.label,
    input,
    fio2: { estimate: round(e.fio2.estimate, 3), low: round(e.fio2.low, 3), high: round(e.fio2.high, 3) },
    fixedPerformance: e.fixedPerformance,
    flowRangeLPerMin: model.flowRangeLPerMin,
    ...(e.totalFlowLPerMin === undefined ? {} : { totalFlowLPerMin: round(e.totalFlowLPerMin, 1) }),
    ...(e.peakInspiratoryFlowLPerMin === undefined
      ? {}
      : { peakInspiratoryFlowLPerMin: round(e.peakInspiratoryFlowLPerMin, 1) }),
    ...(e.entrainmentRatio === undefined ? {} : { entrainmentRatio: round(e.entrainmentRatio, 2) }),
    ...(e.minimumFlowLPerMin === undefined ? {} : { minimumFlowLPerMin: e.minimumFlowLPerMin }),
    notes: e.notes,
    sources: e.sourceKeys,
  };
  if (options.json === true) {
    io.stdout(`${JSON.stringify(result, null, 2)}\n`);
    return 0;
  }
  const lines = [
    `${model.label}: estimated FiO2 ${result.fio2.estimate.toFixed(2)} (range ${result.fio2.low.toFixed(2)}-${result.fio2.high.toFixed(2)})`,
    `  Fixed performance: ${e.fixedPerformance ? 'yes' : 'no'}; device flow range ${model.flowRangeLPerMin.min}-${model.flowRangeLPerMin.max} L/min`,
  ];
  if (result.totalFlowLPerMin !== undefined) {
    lines.push(`  Total flow at the patient: ${result.totalFlowLPerMin} L/min`);
  }
  if (result.peakInspiratoryFlowLPerMin !== undefined) {
    lines.push(`  Estimated peak inspiratory flow: ${result.peakInspiratoryFlowLPerMin} L/min`);
  }
  for (const note of e.notes) {
    lines.push(`  - ${note}`);
  }
  lines.push('  An estimate only: measured FiO2 varies with the breathing pattern. Advisory; local policy governs.');
  io.stdout(`${lines.join('\n')}\n`);
  return 0;
}
