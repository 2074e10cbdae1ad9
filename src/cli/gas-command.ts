import { z } from 'zod';
import {
  aaGradientMmHg,
  alveolarPo2MmHg,
  barometricPressureIsaMmHg,
  classifyPfBerlin,
  expectedAaGradientMmHg,
  hypoxaemiaMechanism,
  inspiredPo2MmHg,
  interpretBloodGas,
  pfRatioMmHg,
  siteBarometricPressureMmHg,
} from '../core/physiology/index.js';
import { convertUnit } from '../units/convert.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { loadPolicy } from './load-policy.js';
import { checkOptions, numberText, parseOptions } from './parse-options.js';

export const GAS_USAGE = `Usage: o2check gas --fio2 FRACTION --pao2 N --paco2 N --units kPa|mmHg [--age YEARS] [--ph N]
                   [--hco3 N] [--altitude-m M | --pb-mmhg N] [--policy FILE] [--json]

Works out the respiratory physiology of one blood gas: barometric pressure, inspired PO2, alveolar PO2
(alveolar gas equation), A-a gradient against the age norm, P/F ratio and the gas interpretation.
  --fio2        inspired oxygen as a fraction (0.21 on air)
  --pao2/--paco2  arterial pressures in the unit given by --units
  --altitude-m  site altitude (ISA model; West 1996 above 5000 m); --pb-mmhg gives a measured pressure
  --policy      policy file for the hypercapnia and acidosis thresholds (default: bundled BTS 2017)`;

const GasOptionsSchema = z
  .strictObject({
    fio2: numberText.pipe(z.number().min(0.21).max(1)),
    pao2: numberText.pipe(z.number().positive()),
    paco2: numberText.pipe(z.number().positive()),
    units: z.enum(['kPa', 'mmHg'], { error: 'must be kPa or mmHg' }),
    age: numberText.pipe(z.number().int().min(16).max(120)).optional(),
    ph: numberText.pipe(z.number().min(6.8).max(7.8)).optional(),
    hco3: numberText.pipe(z.number().min(1).max(60)).optional(),
    altitudeM: numberText.pipe(z.number().min(-500).max(9000)).optional(),
    pbMmhg: numberText.pipe(z.number().min(200).max(800)).optional(),
    policy: z.string().optional(),
    json: z.boolean().optional(),
  })
  .refine((o) => o.altitudeM === undefined || o.pbMmhg === undefined, {
    message: 'give --altitude-m or --pb-mmhg, not both',
  });

function toMmHg(value: number, units: 'kPa' | 'mmHg', what: string): number {
  const converted = convertUnit(value, units === 'kPa' ? 'kPa' : 'mm[Hg]', 'mm[Hg]');
  if (converted.kind === 'failed') {
    throw new UsageError(`--${what}: ${converted.reason}`);
  }
  return converted.value;
}

function toKPa(mmHg: number): number {
  const converted = convertUnit(mmHg, 'mm[Hg]', 'kPa');
  return converted.kind === 'ok' ? converted.value : Number.NaN;
}

const round1 = (v: number): number => Math.round(v * 10) / 10;
const round2 = (v: number): number => Math.round(v * 100) / 100;

export function runGasCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, {
    fio2: { type: 'string' },
    pao2: { type: 'string' },
    paco2: { type: 'string' },
    units: { type: 'string' },
    age: { type: 'string' },
    ph: { type: 'string' },
    hco3: { type: 'string' },
    'altitude-m': { type: 'string' },
    'pb-mmhg': { type: 'string' },
    policy: { type: 'string' },
    json: { type: 'boolean' },
  });
  if (parsed.values['help'] === true) {
    io.stdout(`${GAS_USAGE}\n`);
    return 0;
  }
  const o = checkOptions(GasOptionsSchema, {
    fio2: parsed.values['fio2'],
    pao2: parsed.values['pao2'],
    paco2: parsed.values['paco2'],
    units: parsed.values['units'],
    age: parsed.values['age'],
    ph: parsed.values['ph'],
    hco3: parsed.values['hco3'],
    altitudeM: parsed.values['altitude-m'],
    pbMmhg: parsed.values['pb-mmhg'],
    policy: parsed.values['policy'],
    json: parsed.values['json'],
  });
  const policy = loadPolicy(o.policy, io);
  const pao2 = toMmHg(o.pao2, o.units, 'pao2');
  const paco2 = toMmHg(o.paco2, o.units, 'paco2');

  const pressure =
    o.pbMmhg !== undefined
      ? { mmHg: o.pbMmhg, model: 'given' as const }
      : o.altitudeM !== undefined
        ? siteBarometricPressureMmHg(o.altitudeM)
        : { mmHg: barometricPressureIsaMmHg(0), model: 'isa-1993' as const };
  const inspired = inspiredPo2MmHg(o.fio2, pressure.mmHg);
  const alveolar = alveolarPo2MmHg({ fio2Fraction: o.fio2, barometricPressureMmHg: pressure.mmHg, paco2MmHg: paco2 });
  const alveolarFull = alveolarPo2MmHg({
    fio2Fraction: o.fio2,
    barometricPressureMmHg: pressure.mmHg,
    paco2MmHg: paco2,
    form: 'full',
  });
  const gradient = aaGradientMmHg(alveolar, pao2);
  // The age norm describes healthy people breathing air; on oxygen the gradient widens normally.
  const onAir = o.fio2 <= 0.21;
  const expected = o.age === undefined ? undefined : expectedAaGradientMmHg(o.age);
  const pf = pfRatioMmHg(pao2, o.fio2);
  const interpretation = interpretBloodGas(
    {
      ...(o.ph === undefined ? {} : { ph: o.ph }),
      paco2MmHg: paco2,
      ...(o.hco3 === undefined ? {} : { hco3MmolPerL: o.hco3 }),
    },
    {
      acidosisPhBelow: policy.thresholds.acidosisPhBelow,
      hypercapniaPaco2MmHg: policy.hypercapnicRisk.hypercapniaPaco2.mmHg,
      chronicBicarbonateAboveMmolPerL: policy.hypercapnicRisk.chronicBicarbonateAboveMmolPerL,
    },
  );
  const mechanism =
    expected === undefined
      ? undefined
      : hypoxaemiaMechanism({
          inspiredPo2MmHg: inspired,
          aaGradientMmHg: gradient,
          expectedAaGradientMmHg: expected,
          paco2MmHg: paco2,
          hypercapniaPaco2MmHg: policy.hypercapnicRisk.hypercapniaPaco2.mmHg,
          fio2Fraction: o.fio2,
          pao2MmHg: pao2,
        });

  const result = {
    input: { fio2: o.fio2, pao2MmHg: round1(pao2), paco2MmHg: round1(paco2), units: o.units },
    barometricPressureMmHg: round1(pressure.mmHg),
    barometricPressureModel: pressure.model,
    inspiredPO2MmHg: round1(inspired),
    alveolarPO2MmHg: round1(alveolar),
    alveolarPO2FullEquationMmHg: round1(alveolarFull),
    alveolarPO2KPa: round2(toKPa(alveolar)),
    aaGradientMmHg: round1(gradient),
    aaGradientKPa: round2(toKPa(gradient)),
    expectedAaGradientMmHg: expected === undefined ? null : round1(expected),
    ageNormApplies: onAir,
    pfRatio: round1(pf),
    pfRatioKPa: round1(toKPa(pf)),
    pfBerlinCategory: classifyPfBerlin(pf),
    interpretation:
      interpretation.kind === 'ok'
        ? interpretation.value
        : { unknown: interpretation.reason, missing: interpretation.missing ?? [] },
    mechanism: mechanism === undefined ? null : mechanism.kind === 'ok' ? mechanism.value : { unknown: mechanism.reason },
    policy: { id: policy.id, version: policy.version },
  };
  if (o.json === true) {
    io.stdout(`${JSON.stringify(result, null, 2)}\n`);
    return 0;
  }
  const lines = [
    `Barometric pressure ${result.barometricPressureMmHg} mmHg (${pressure.model})`,
    `Inspired PO2 ${result.inspiredPO2MmHg} mmHg = FiO2 ${o.fio2} x (${result.barometricPressureMmHg} - 47)`,
    `Alveolar PO2 ${result.alveolarPO2MmHg} mmHg (${result.alveolarPO2KPa} kPa) = PiO2 - PaCO2/0.8; full equation ${result.alveolarPO2FullEquationMmHg} mmHg`,
    `A-a gradient ${result.aaGradientMmHg} mmHg (${result.aaGradientKPa} kPa)` +
      (expected === undefined
        ? ''
        : onAir
          ? `; expected for age ${o.age} on air: up to ${round1(expected)} mmHg (age/4 + 4)`
          : '; the age norm applies on air only'),
    `P/F ratio ${result.pfRatio} mmHg (${result.pfRatioKPa} kPa); Berlin category: ${result.pfBerlinCategory}`,
    interpretation.kind === 'ok'
      ? `Gas: ${interpretation.value.summary}`
      : `Gas: cannot interpret (${interpretation.reason})`,
  ];
  if (mechanism !== undefined && mechanism.kind === 'ok') {
    lines.push(`Hypoxaemia mechanism (a hint, not a diagnosis): ${mechanism.value.explanation}`);
  }
  lines.push('Advisory only; interpret with the patient and local policy.');
  io.stdout(`${lines.join('\n')}\n`);
  return 0;
}
