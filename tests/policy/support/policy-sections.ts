/**
 * A small valid policy in sections, for tests that write one section themselves at the top of the file
 * (so its line numbers can be counted by hand) and take the rest from here. Values are those of the
 * bundled policies/based-on-bts-2017.yaml, whose comments give each one's source: BTS 2017 Tables 1–4 for the
 * ranges, BTS/ICS 2016 for the ventilation thresholds, the rest local choices or common practice.
 */
const SECTIONS = {
  header: ['format: 1', 'id: larkspur-bay-test', 'version: "1.0.0"', 'title: Larkspur Bay General Hospital test policy', 'basis: bts-2017'],
  site: ['site:', '  name: Larkspur Bay General Hospital', '  altitudeM: 40'],
  targets: [
    'targets:',
    '  standard: { lowPercent: 94, highPercent: 98 }',
    '  hypercapnicRisk: { lowPercent: 88, highPercent: 92 }',
    '  oxygenToxicityRisk: { lowPercent: 85, highPercent: 88 }',
  ],
  hypercapnicRisk: [
    'hypercapnicRisk:',
    '  conditions: [copd, bronchiectasis, cystic-fibrosis, neuromuscular-disease, chest-wall-deformity, morbid-obesity]',
    '  hypercapniaPaco2AtLeast: { value: 6.0, unit: kPa }',
    '  chronicBicarbonateAboveMmolPerL: 28',
    '  morbidObesityBmiAbove: 40',
  ],
  freshness: ['freshness:', '  vitalSignsMinutes: 240', '  bloodGasMinutes: 720', '  haemoglobinHours: 72', '  previousHypercapniaDays: 1825'],
  thresholds: [
    'thresholds:',
    '  acidosisPhBelow: 7.35',
    '  nivPhBelow: 7.35',
    '  nivPaco2Above: { value: 6.5, unit: kPa }',
    '  invasiveVentilationPhBelow: 7.25',
    '  criticalSpo2BelowPercent: 85',
    '  criticalPointsBelowTarget: 4',
    '  highOxygenFio2AtLeast: 0.40',
    '  venturiTachypnoeaRespRateAbove: 30',
    '  venturiTachypnoeaFlowMultiplier: 1.5',
    '  clusterHeadacheFlowLPerMin: { from: 12, to: 15 }',
    '  pneumothoraxFlowLPerMin: 15',
    '  nasalCannulaStepDownLPerMin: 1',
    '  repeatGasMinutes: { from: 30, to: 60 }',
  ],
  severity: ['severity: {}'],
  disabledRules: ['disabledRules: []'],
  references: ['references:', '  bts-2017: { label: BTS 2017, citation: "BTS guideline for oxygen use in adults, Thorax 2017" }'],
  cautions: [
    'cautions:',
    '  advisoryOnly: "Advisory only: supports, and does not replace, clinical judgement."',
    '  pulseOximetry: "Pulse oximetry can overestimate arterial saturation; check a gas when in doubt."',
  ],
} as const;

export type SectionName = keyof typeof SECTIONS;

/** Every section but the ones named, one YAML line each, to append after lines a test wrote itself. */
export function otherSections(...written: readonly SectionName[]): string {
  return (Object.keys(SECTIONS) as SectionName[])
    .filter((name) => !written.includes(name))
    .flatMap((name) => SECTIONS[name])
    .join('\n');
}

/** A policy whose first lines are `top` (numbered from 1 as written), the other sections after them. */
export function policyWith(top: readonly string[], ...written: readonly SectionName[]): string {
  return `${[...top, otherSections(...written)].join('\n')}\n`;
}
