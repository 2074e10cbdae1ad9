import { readFileSync } from 'node:fs';
import type { Policy } from '../../../src/core/policy.js';
import { parsePolicyText } from '../../../src/policy/parse-policy.js';

const BTS_TEXT = readFileSync(new URL('../../../policies/based-on-bts-2017.yaml', import.meta.url), 'utf8');

/**
 * The bundled BTS 2017 policy with its `devices` section replaced by `lines` (YAML, starting with
 * `devices:`; none to drop the section), parsed by the real parser so that a test's catalogue is one a
 * hospital could load. Throws when the file would be refused.
 */
export function policyWithDevices(lines: readonly string[] | undefined): Policy {
  const start = BTS_TEXT.indexOf('\ndevices:');
  const end = BTS_TEXT.indexOf('\nseverity:');
  const text = `${BTS_TEXT.slice(0, start)}\n${(lines ?? []).join('\n')}${BTS_TEXT.slice(end)}`;
  const parsed = parsePolicyText(text);
  if (parsed.kind !== 'ok') {
    throw new Error(`catalogue refused: ${parsed.problems.map((p) => `${p.path}: ${p.message}`).join('; ')}`);
  }
  return parsed.policy;
}

/** Venturi valve lines for a `devices` section: [percent, printed minimum L/min]. */
export function venturiLines(valves: readonly (readonly [number, number])[]): string[] {
  return ['  venturi-mask:', '    settings:', ...valves.map(([p, q]) => `      - { fio2Percent: ${p}, minimumFlowLPerMin: ${q} }`)];
}

/**
 * The invented Larkspur Bay General Hospital catalogue of docs/policy.md: every limit inside the
 * published range of its device (BTS 2017 Tables 2 and 4; the device models' sources), narrowed by
 * local choice; Venturi valves 24, 28, 35 and 60 % at the usual printed minimums (BTS 2017 Table 4 for
 * 24 % and 28 %; device labelling, common practice, for 35 % and 60 %); no CPAP/NIV on the wards.
 */
export const LARKSPUR_BAY_DEVICES: readonly string[] = [
  'devices:',
  '  nasal-cannula: { flowLPerMin: { from: 1, to: 4 } }',
  '  simple-face-mask: { flowLPerMin: { from: 5, to: 8 } }',
  '  reservoir-mask: { flowLPerMin: { from: 12, to: 15 } }',
  ...venturiLines([
    [24, 2],
    [28, 4],
    [35, 8],
    [60, 15],
  ]),
  '  tracheostomy-mask: { flowLPerMin: { from: 6, to: 12 } }',
  '  high-flow-nasal-cannula: { flowLPerMin: { from: 20, to: 50 } }',
];
