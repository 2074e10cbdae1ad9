import {
  formatFio2Range,
  formatFraction,
  formatGasValue,
  formatMmHg,
  formatNumber,
  formatRatio,
  joinWords,
} from '../assessment/format.js';
import { RICE_CUTOFFS } from '../assessment/bedside-physiology.js';
import { BERLIN_CUTOFFS_MMHG, fio2IsUncertain } from '../assessment/gas-physiology.js';
import type {
  Assessment,
  BerlinClass,
  Calculated,
  Fio2InForce,
  OxygenationRatio,
  RiceClass,
  RoxInterpretation,
} from '../assessment/types.js';
import { RICE_SF_CUTOFFS, ROX_HIGH_RISK_BELOW, ROX_LOW_RISK_AT_LEAST } from '../physiology/index.js';
import type { BloodGas, Computation, Finding, Outcome } from '../types.js';
import { deliveryComputation, describeAge, describeDelivery, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/** Berlin 2012 bands in mmHg, as classifyPfBerlin applies them; these are the words for each class. */
const BERLIN_WORDS: Readonly<Record<BerlinClass, string>> = {
  none: 'above 300, outside the Berlin ARDS bands',
  mild: 'Berlin mild band (200–300)',
  moderate: 'Berlin moderate band (100–200)',
  severe: 'Berlin severe band (100 or less)',
};

/** classifySfRice puts a value on a cut-off in the lower band, so the words say "at or below". */
const RICE_WORDS: Readonly<Record<RiceClass, string>> = {
  none: `above ${RICE_SF_CUTOFFS.pf300} (Rice: about P/F above 300)`,
  'below-315': `at or below ${RICE_SF_CUTOFFS.pf300} (Rice: about P/F 300 or less)`,
  'below-235': `at or below ${RICE_SF_CUTOFFS.pf200} (Rice: about P/F 200 or less)`,
};

/** How the gas line names each value, in the order it shows them. */
const GAS_LABELS = { ph: 'pH', paco2: 'PCO2', pao2: 'PO2', hco3: 'HCO3' } as const;

/** "arterial 25 min ago, pH 7.28, PCO2 8.1 kPa, PO2 7.9 kPa, HCO3 28": the values the gas has. */
function describeGas(gas: BloodGas, now: Date): string {
  let line = `${gas.specimen} ${describeAge(gas, now)}`;
  for (const component of ['ph', 'paco2', 'pao2', 'hco3'] as const) {
    const shown = formatGasValue(gas, component);
    if (shown !== undefined) {
      line += `, ${GAS_LABELS[component]} ${shown}`;
    }
  }
  return line;
}

const ROX_CUTOFFS = [ROX_LOW_RISK_AT_LEAST, ...Object.values(ROX_HIGH_RISK_BELOW)] as const;

/**
 * A number rounded for display, with more decimals when rounding would put it on or across a
 * cut-off the card compares it with: ROX 4.875 is "4.875", never "4.88, at or above 4.88".
 */
export function formatBesideCutoffs(value: number, decimals: number, cutoffs: readonly number[]): string {
  const misleading = (places: number): boolean => {
    const shown = Number(value.toFixed(places));
    return cutoffs.some((c) => (shown >= c) !== (value >= c) || (shown === c && value !== c));
  };
  let places = decimals;
  while (places < decimals + 3 && misleading(places)) {
    places += 1;
  }
  return formatNumber(value, places);
}

/**
 * The band words for a ratio: the band when the whole range lies in one, otherwise "around" the
 * cut-off it spans, with no band stated (P/F 195–215 is around 200, not moderate).
 */
function bandWords<C extends string>(
  ratio: OxygenationRatio,
  band: C | undefined,
  words: Readonly<Record<C, string>>,
  scale: string,
): string {
  if (band !== undefined) {
    return words[band];
  }
  const cutoffs = ratio.spannedCutoffs.map((c) => String(c));
  const [only] = cutoffs;
  return cutoffs.length === 1 && only !== undefined
    ? `around ${only}: the range spans the ${scale} ${only} cut-off, so no band is stated`
    : `the range spans the ${scale} ${joinWords(cutoffs)} cut-offs, so no band is stated`;
}

/** The FiO2 a ratio used, in a clinician's words: value, range and where it came from. */
export function describeFio2Used(fio2: Fio2InForce): string {
  if (fio2.onAir) {
    return 'FiO2 0.21 (room air), as recorded';
  }
  switch (fio2.source) {
    case 'recorded':
      return `FiO2 ${formatFraction(fio2.estimate)}, as recorded`;
    case 'set':
      return fio2IsUncertain(fio2)
        ? `the set FiO2 ${formatFraction(fio2.estimate)} (${formatFraction(fio2.low)}–${formatFraction(fio2.high)} by the device's measured accuracy)`
        : `the set FiO2 ${formatFraction(fio2.estimate)}`;
    case 'estimated':
      return `an estimated FiO2 of about ${formatFio2Range(fio2)}, ${
        fio2.basis === 'recorded-flow' ? 'from the recorded O2 flow' : "from the order's device and flow"
      }`;
  }
}

const ROX_WORDS: Readonly<Record<RoxInterpretation, string>> = {
  'low-risk': `${ROX_LOW_RISK_AT_LEAST} or more: lower risk of high-flow failure (Roca 2019)`,
  'high-risk': 'below the Roca 2019 failure threshold for the time on high flow',
  indeterminate:
    'not graded: the Roca 2019 thresholds apply at 2, 6 and 12 h of high flow, and this reading falls between them, before 2 h, or at an unknown time on high flow',
};

const MODEL_WORDS: Readonly<Record<Assessment['barometricPressure']['model'], string>> = {
  'site-value': 'site value from the local policy',
  'isa-1993': 'ICAO Standard Atmosphere at the site altitude',
  'west-1996': 'West 1996 model at the site altitude',
};

/**
 * " on air" or " at FiO2 about 0.29" when a ratio was worked out at an FiO2 other than the order's
 * figure the summary line leads with, so the line never reads as one FiO2 for all.
 */
function atFio2(fio2: Fio2InForce, shownEstimate: number | undefined): string {
  if (shownEstimate !== undefined && formatFraction(fio2.estimate) === formatFraction(shownEstimate)) {
    return '';
  }
  if (fio2.onAir) {
    return ' on air';
  }
  return fio2.source === 'estimated'
    ? ` at FiO2 about ${formatFraction(fio2.estimate)}`
    : ` at FiO2 ${formatFraction(fio2.estimate)}`;
}

/** A pressure with its range when the FiO2 is a range: "about 81 (45–117) mmHg". */
function pressureWithRange(calculated: Calculated<number>): string {
  const range = calculated.range;
  if (range === undefined || Math.round(range.low) === Math.round(range.high)) {
    return formatMmHg(calculated.value);
  }
  return `about ${formatNumber(calculated.value, 0)} (${formatNumber(range.low, 0)}–${formatNumber(range.high, 0)}) mmHg`;
}

/** A figure's text as the detail lines show it, formatted once: the key figures repeat it. */
interface FigureTexts {
  readonly pf: string | undefined;
  readonly sf: string | undefined;
  readonly aa: string | undefined;
  readonly rox: string | undefined;
}

/** The two or three numbers a respiratory therapist looks for first, for the card summary. */
function keyFigures(assessment: Assessment, figures: FigureTexts): string {
  const { delivery, physiology: p } = assessment;
  const parts: string[] = [];
  const shown = delivery.kind === 'ok' ? delivery.value.fio2.estimate : undefined;
  if (delivery.kind === 'ok') {
    parts.push(
      delivery.value.fio2Source === 'set'
        ? `FiO2 ${formatFraction(delivery.value.fio2.estimate)} set`
        : `FiO2 about ${formatFraction(delivery.value.fio2.estimate)}`,
    );
  }
  if (p.pfRatio.kind === 'ok') {
    parts.push(`P/F ${figures.pf}${atFio2(p.pfRatio.value.value.fio2, shown)}`);
  } else if (p.sfRatio.kind === 'ok') {
    parts.push(`S/F ${figures.sf}${atFio2(p.sfRatio.value.value.fio2, shown)}`);
  }
  if (figures.aa !== undefined) {
    parts.push(`A-a ${figures.aa}`);
  }
  if (figures.rox !== undefined) {
    parts.push(`ROX ${figures.rox}`);
  }
  return parts.length === 0 ? 'figures not available' : parts.join(', ');
}

/**
 * The mechanism hint as the card's sentence holds it: the shorter caveat, and no full stop of its own
 * (the card adds one).
 */
function mechanismWords(explanation: string): string {
  return explanation
    .replace(' (the age norm applies on air only, so this comparison is less reliable)', ' (a looser comparison on oxygen)')
    .replace(/\.+$/, '');
}

function show<T>(outcome: Outcome<Calculated<T>>, text: (value: T) => string): string {
  return outcome.kind === 'ok' ? text(outcome.value.value) : `not available (${outcome.reason})`;
}

/**
 * A summary of the oxygenation numbers for respiratory therapists and prescribers: the delivered-FiO2
 * estimate with its device notes, PAO2 from the alveolar gas equation at the site's barometric
 * pressure, the A-a gradient against the age norm (which applies on air only), P/F with its Berlin
 * band (Berlin 2012; the bands formally need PEEP or CPAP of 5 cmH2O), S/F with the Rice 2007
 * cut-offs, ROX on high flow with the Roca 2019 thresholds, the acid-base reading and a hint at the
 * mechanism of any hypoxaemia. Info, order-sign only, and only when at least one number is known.
 * Sources: see docs/basis/physiology.md and docs/basis/devices.md for each formula.
 */
export const rule: Rule = {
  id: 'oxygenation-summary',
  title: 'Oxygenation summary',
  version: 3,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, policy, now }): readonly Finding[] => {
    const { order, physiology: p, delivery, current, barometricPressure: pb } = assessment;
    const anything =
      delivery.kind === 'ok' ||
      [p.alveolarPo2, p.pfRatio, p.sfRatio, p.rox, p.oxygenContent, p.gasInterpretation].some((o) => o.kind === 'ok');
    if (!anything) {
      return [];
    }
    const gas = current.arterialGas ?? current.gas;
    // One line for the gas and the FiO2 it was taken on, so "no gas" never sits beside an FiO2 for it.
    const fio2AtGas =
      p.fio2AtGas.kind === 'ok'
        ? `${describeFio2Used(p.fio2AtGas.value)}${
            p.fio2AtGas.value.basis === 'order-estimate' ? ', assuming the order was in use when it was taken' : ''
          }`
        : `an FiO2 not known (${p.fio2AtGas.reason})`;
    const gasUsed =
      gas === undefined
        ? `none within the last ${formatNumber(policy.freshness.bloodGasMinutes / 60, 1)} h`
        : describeGas(gas, now) + (gas.specimen === 'arterial' ? `; taken on ${fio2AtGas}` : '');
    const expected =
      p.expectedAaGradient.kind === 'ok'
        ? `age norm on air ${formatMmHg(p.expectedAaGradient.value.value)}`
        : 'the age norm applies on air only, so it is not compared';
    // Its result is the delivered FiO2 as describeDelivery writes it: the line below reuses it.
    const deliveryCalc = deliveryComputation(assessment);
    const computations: Computation[] = deliveryCalc === undefined ? [] : [deliveryCalc];
    if (p.alveolarPo2.kind === 'ok') {
      computations.push(pb.computation);
    }
    const calculated = [
      p.inspiredPo2,
      p.alveolarPo2,
      p.aaGradient,
      p.expectedAaGradient,
      p.pfRatio,
      p.sfRatio,
      p.rox,
      p.oxygenContent,
    ];
    for (const outcome of calculated) {
      if (outcome.kind === 'ok') {
        computations.push(outcome.value.computation);
      }
    }
    // Each figure is formatted once: the detail lines and the key figures show the same text.
    const figures: FigureTexts = {
      pf: p.pfRatio.kind === 'ok' ? formatRatio(p.pfRatio.value.value, BERLIN_CUTOFFS_MMHG) : undefined,
      sf: p.sfRatio.kind === 'ok' ? formatRatio(p.sfRatio.value.value, RICE_CUTOFFS) : undefined,
      aa: p.aaGradient.kind === 'ok' ? pressureWithRange(p.aaGradient.value) : undefined,
      rox: p.rox.kind === 'ok' ? formatBesideCutoffs(p.rox.value.value.index, 2, ROX_CUTOFFS) : undefined,
    };
    const pfWords = show(
      p.pfRatio,
      (v) => `${figures.pf} mmHg at ${describeFio2Used(v.fio2)}; ` + bandWords(v, v.berlin, BERLIN_WORDS, 'Berlin'),
    );
    const sfWords = show(
      p.sfRatio,
      (v) => `${figures.sf} at ${describeFio2Used(v.fio2)}; ` + bandWords(v, v.rice, RICE_WORDS, 'Rice'),
    );
    const aaWords =
      p.aaGradient.kind === 'ok'
        ? p.aaGradient.value.range === undefined
          ? `${formatBesideCutoffs(p.aaGradient.value.value, 0, p.expectedAaGradient.kind === 'ok' ? [p.expectedAaGradient.value.value] : [])} mmHg; ${expected}`
          : `${figures.aa} over the FiO2 range; ${expected}`
        : `not available (${p.aaGradient.reason})`;
    const roxWords = show(p.rox, (v) => {
      const after =
        v.hoursOnHighFlow === undefined
          ? ''
          : v.hoursOnHighFlow === 0
            ? ' at the start of high flow'
            : ` after ${formatNumber(v.hoursOnHighFlow, 1)} h`;
      return `${figures.rox}${after}, ${ROX_WORDS[v.interpretation]}`;
    });
    return [
      makeFinding(rule, {
        orderReference: order?.reference,
        values: {
          orderDescription: order === undefined ? 'no oxygen order' : describeOrder(order),
          deliveredFio2:
            delivery.kind === 'ok'
              ? `${deliveryCalc?.result ?? describeDelivery(assessment)}; ${delivery.value.fio2Source === 'set' ? 'from the' : 'estimated by the'} ${delivery.value.model.name}`
              : describeDelivery(assessment),
          deviceNotes: delivery.kind === 'ok' && delivery.value.notes.length > 0 ? delivery.value.notes.join(' ') : 'none',
          barometricPressure: `${formatMmHg(pb.mmHg)} (${MODEL_WORDS[pb.model]})`,
          gasUsed,
          alveolarPo2: p.alveolarPo2.kind === 'ok' ? pressureWithRange(p.alveolarPo2.value) : `not available (${p.alveolarPo2.reason})`,
          aaGradient: aaWords,
          pfRatio: pfWords,
          sfRatio: sfWords,
          rox: roxWords,
          oxygenContent: show(p.oxygenContent, (v) => `${formatNumber(v, 1)} mL/dL`),
          gasInterpretation:
            p.gasInterpretation.kind === 'ok'
              ? p.gasInterpretation.value.summary
              : `not available (${p.gasInterpretation.reason})`,
          mechanism:
            p.mechanism.kind === 'ok'
              ? mechanismWords(p.mechanism.value.explanation)
              : `not available (${p.mechanism.reason})`,
          keyFigures: keyFigures(assessment, figures),
          // ROX belongs to high flow; on other devices the card leaves it out.
          gradientAndRox:
            p.rox.kind === 'ok' || order?.device === 'high-flow-nasal-cannula' ? `${aaWords}. ROX: ${roxWords}` : aaWords,
          // The card shows P/F when there is an arterial gas, else S/F; both are in the workings.
          oxygenationRatio: p.pfRatio.kind === 'ok' ? `P/F ${pfWords}` : `S/F ${sfWords}`,
        },
        computations,
        sourceKeys: [
          ...computations.map((c) => c.sourceKey),
          ...(delivery.kind === 'ok' ? delivery.value.sourceKeys : []),
          ...(p.gasInterpretation.kind === 'ok' ? ['rcem-abg'] : []),
        ],
      }),
    ];
  },
};
