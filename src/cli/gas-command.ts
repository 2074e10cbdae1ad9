import { z } from 'zod';
import {
  aaGradientMmHg,
  alveolarPo2MmHg,
  alveolarPo2OrUnknown,
  barometricPressureIsaMmHg,
  classifyPfBerlin,
  expectedAaGradientMmHg,
  hypoxaemiaMechanism,
  inspiredPo2MmHg,
  interpretBloodGas,
  pfRatioMmHg,
  PHYSIOLOGY_VALID_RANGES,
  RESPIRATORY_QUOTIENT_DEFAULT,
  siteBarometricPressureMmHg,
  WATER_VAPOUR_PRESSURE_37C_MMHG,
} from '../core/physiology/index.js';
import { siteBarometricPressure } from '../core/assessment/build-assessment.js';
import type { Policy } from '../core/policy.js';
import { KPA_LIKE_PCO2_BELOW_MMHG } from '../fhir/gas-consistency.js';
import { convertUnit } from '../units/convert.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { FIO2_CONVENTION, fio2Text } from './fio2-option.js';
import { loadPolicy } from './load-policy.js';
import { checkOptions, numberText, parseOptions } from './parse-options.js';

export const GAS_USAGE = `Usage: oxygen-order-checker gas --fio2 F --pao2 N --paco2 N --units kPa|mmHg [--age YEARS] [--ph N]
                   [--hco3 N] [--altitude-m M | --pb-mmhg N] [--policy FILE] [--json]

Works out the respiratory physiology of one blood gas: barometric pressure, inspired PO2, alveolar PO2
(alveolar gas equation), A-a gradient against the age norm, P/F ratio and the gas interpretation.
  --fio2        inspired oxygen: ${FIO2_CONVENTION}
  --pao2/--paco2  arterial pressures, both in the unit given by --units
  --altitude-m  site altitude (ISA model; West 1996 above 5000 m); --pb-mmhg gives a measured pressure
  --policy      policy file for the hypercapnia and acidosis thresholds (default: bundled BTS 2017);
                its site pressure (site.barometricPressure, else site.altitudeM) is used unless
                --altitude-m or --pb-mmhg is given. Without --policy, --altitude-m or --pb-mmhg the
                pressure is the ISA sea-level 760 mmHg.
Values that cannot belong to one patient (an alveolar PO2 below zero, a PaO2 above the alveolar PO2,
a pressure that reads like the other unit) are refused with the likely slip named (exit 2).`;

const GasOptionsSchema = z
  .strictObject({
    fio2: fio2Text,
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

type PressureUnit = 'kPa' | 'mmHg';

function toMmHg(value: number, units: PressureUnit, what: string): number {
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

/**
 * A PaO2 above the alveolar PO2 by more than this is not measurement error (the same allowance the
 * hypoxaemia-mechanism hint uses): blood cannot hold more oxygen than the alveoli it left.
 */
const PAO2_ABOVE_ALVEOLAR_ALLOWANCE_MMHG = 10;

interface Pressure {
  readonly mmHg: number;
  readonly model: string;
  /** Where the pressure came from, for the output. */
  readonly source: 'command line' | 'policy' | 'default sea level';
}

/** --pb-mmhg, else --altitude-m, else the policy's site when a policy file was given, else ISA 0 m. */
function choosePressure(
  o: { readonly pbMmhg?: number | undefined; readonly altitudeM?: number | undefined; readonly policy?: string | undefined },
  policy: Policy,
): Pressure {
  if (o.pbMmhg !== undefined) {
    return { mmHg: o.pbMmhg, model: 'given', source: 'command line' };
  }
  if (o.altitudeM !== undefined) {
    return { ...siteBarometricPressureMmHg(o.altitudeM), source: 'command line' };
  }
  if (o.policy !== undefined) {
    const site = siteBarometricPressure(policy);
    return { mmHg: site.mmHg, model: site.model, source: 'policy' };
  }
  return { mmHg: barometricPressureIsaMmHg(0), model: 'isa-1993', source: 'default sea level' };
}

const fmt1 = (v: number): string => (Math.round(v * 10) / 10).toFixed(1);

/** What is impossible about these pressures at this FiO2 and barometric pressure, if anything. */
function problemsWith(pao2MmHg: number, paco2MmHg: number, fio2: number, pbMmHg: number): string[] {
  const problems: string[] = [];
  const { paco2MmHg: paco2Range, pao2MmHg: pao2Range } = PHYSIOLOGY_VALID_RANGES;
  if (paco2MmHg < KPA_LIKE_PCO2_BELOW_MMHG || paco2MmHg > paco2Range.max) {
    problems.push(`PaCO2 ${fmt1(paco2MmHg)} mmHg is outside ${KPA_LIKE_PCO2_BELOW_MMHG}-${paco2Range.max} mmHg`);
  }
  if (pao2MmHg < pao2Range.min || pao2MmHg > pao2Range.max) {
    problems.push(`PaO2 ${fmt1(pao2MmHg)} mmHg is outside ${pao2Range.min}-${pao2Range.max} mmHg`);
  }
  if (problems.length > 0) {
    return problems;
  }
  const alveolar = alveolarPo2OrUnknown({ fio2Fraction: fio2, barometricPressureMmHg: pbMmHg, paco2MmHg });
  if (alveolar.kind === 'unknown') {
    const r = RESPIRATORY_QUOTIENT_DEFAULT;
    const ph2o = WATER_VAPOUR_PRESSURE_37C_MMHG;
    problems.push(
      `the alveolar PO2 would be ${fmt1(inspiredPo2MmHg(fio2, pbMmHg) - paco2MmHg / r)} mmHg ` +
        `(FiO2 ${fio2} x (${fmt1(pbMmHg)} - ${ph2o}) - PaCO2 ${fmt1(paco2MmHg)}/${r}), below zero`,
    );
  } else if (pao2MmHg > alveolar.value + PAO2_ABOVE_ALVEOLAR_ALLOWANCE_MMHG) {
    problems.push(
      `PaO2 ${fmt1(pao2MmHg)} mmHg is above the alveolar PO2 ${fmt1(alveolar.value)} mmHg at FiO2 ${fio2}, ` +
        'and blood cannot hold more oxygen than the alveoli it left',
    );
  }
  return problems;
}

/**
 * Refuses pressures that cannot belong to one patient, naming the likely slip: values typed in the
 * other unit (mmHg values given with --units kPa read as pressures 7.5 times too high), or an FiO2
 * lower than the patient breathes. Never guesses: the user retypes.
 */
function checkGasValues(
  o: { readonly pao2: number; readonly paco2: number; readonly units: PressureUnit; readonly fio2: number },
  pressure: Pressure,
): void {
  const pao2 = toMmHg(o.pao2, o.units, 'pao2');
  const paco2 = toMmHg(o.paco2, o.units, 'paco2');
  const problems = problemsWith(pao2, paco2, o.fio2, pressure.mmHg);
  if (problems.length === 0) {
    return;
  }
  const other: PressureUnit = o.units === 'kPa' ? 'mmHg' : 'kPa';
  const otherFits =
    problemsWith(toMmHg(o.pao2, other, 'pao2'), toMmHg(o.paco2, other, 'paco2'), o.fio2, pressure.mmHg).length === 0;
  const given = `--pao2 ${o.pao2} --paco2 ${o.paco2} --units ${o.units}`;
  const slip = otherFits
    ? `These values look like ${other}: did you mean --units ${other}? (1 kPa = 7.50 mmHg)`
    : `Check the FiO2 (is the patient on more oxygen than ${o.fio2}?), the values and their unit ` +
      `(--units ${o.units}; 1 kPa = 7.50 mmHg).`;
  throw new UsageError(`${given}: ${problems.join('; ')}.
${slip}`);
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
  const pressure = choosePressure(o, policy);
  checkGasValues(o, pressure);
  const pao2 = toMmHg(o.pao2, o.units, 'pao2');
  const paco2 = toMmHg(o.paco2, o.units, 'paco2');
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
  // The age norm was described in adults from 18 (PHYSIOLOGY_VALID_RANGES.ageYears); younger: no norm.
  const ageRange = PHYSIOLOGY_VALID_RANGES.ageYears;
  const expected =
    o.age === undefined || o.age < ageRange.min || o.age > ageRange.max ? undefined : expectedAaGradientMmHg(o.age);
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
    barometricPressureSource: pressure.source,
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
    `Barometric pressure ${result.barometricPressureMmHg} mmHg (${pressure.model}; ${pressure.source})`,
    `Inspired PO2 ${result.inspiredPO2MmHg} mmHg = FiO2 ${o.fio2} x (${result.barometricPressureMmHg} - 47)`,
    `Alveolar PO2 ${result.alveolarPO2MmHg} mmHg (${result.alveolarPO2KPa} kPa) = PiO2 - PaCO2/0.8; full equation ${result.alveolarPO2FullEquationMmHg} mmHg`,
    `A-a gradient ${result.aaGradientMmHg} mmHg (${result.aaGradientKPa} kPa)` +
      (expected === undefined
        ? o.age === undefined
          ? ''
          : `; no age norm at ${o.age} years (the norm was described in adults from ${ageRange.min})`
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
