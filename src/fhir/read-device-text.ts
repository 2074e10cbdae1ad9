import type { DeviceKind } from '../core/types.js';
import { clauseBefore } from './read-target-text.js';
import { allMatches } from '../text/all-matches.js';

/**
 * Finds the device named in order words and maps the trade's words onto our device kinds (the
 * word lists in docs/basis/devices.md and docs/fhir-input.md): nasal cannula/cannulae/prongs/specs/NC;
 * simple, Hudson, face or MC mask; Venturi, fixed-performance, air-entrainment or "28% mask";
 * non-rebreather, NRB, reservoir or trauma mask; high-flow nasal, HFNC, HFNO (and, less specifically,
 * "high flow"); tracheostomy mask or collar; CPAP, NIV, BiPAP, NIPPV. Words with no kind (T-piece,
 * bag-valve mask, partial rebreathing mask, bare "mask") are left unmapped. A specific word beats
 * a generic one ("high flow via non-rebreather" is a reservoir mask); otherwise the first mention
 * wins. Mentions of history or plans ("home NIV", "escalate to NRB") are not the device ordered.
 */

export interface DeviceMention {
  readonly device: DeviceKind;
  readonly text: string;
  readonly start: number;
  readonly end: number;
  readonly specific: boolean;
}

interface DevicePattern {
  readonly device: DeviceKind;
  readonly pattern: RegExp;
  readonly specific: boolean;
  /**
   * Lower-case words, one of which every match of `pattern` contains: a text holding none of them
   * cannot match, so the pattern is not run on it. Most texts name one device, so most patterns are
   * skipped this way (tests/fhir/read-device-text-gates.test.ts checks each match holds one).
   */
  readonly needs: readonly string[];
}

/** A flow as written before or after a device word: "2L", "2 L/min", "4 lpm", "2 litres". */
const FLOW_WORDS = String.raw`\d+(?:\.\d+)?\s?(?:L\/min|l\/min|lpm|LPM|L|l|litres?|liters?)`;

/**
 * A short word that counts as a device only where a device stands in an order: after "via", "per" or
 * "on", or next to a flow ("2L NP", "NP 2L"). Elsewhere ("seen by NP", "FM radio") it is not a device.
 */
function inDevicePosition(word: string): string {
  // The leading look-ahead asserts the word the match then takes, so it changes no match; it lets
  // the look-behinds (slow, as they are tried backwards) run only where the word stands, not at
  // every character of the text.
  return String.raw`(?=${word}\b)(?:(?<=\b(?:via|per|on)\s{1,3})|(?<=${FLOW_WORDS}\s{0,3}))${word}\b|\b${word}(?=\s{0,3}${FLOW_WORDS}\b)`;
}

/** Exported for the test that checks each pattern's `needs`. */
export const DEVICE_PATTERNS: readonly DevicePattern[] = [
  {
    device: 'high-flow-nasal-cannula',
    specific: true,
    needs: ['hfn', 'nhf', 'high'],
    pattern:
      /\bH?HFN(?:C|O|OT)\b|\bNHF\b|\b(?:heated humidified )?high[- ]?flow nasal(?: (?:cannula[es]?|cannulae|oxygen|prongs?|therapy))?\b|\bnasal high[- ]?flow\b/gi,
  },
  {
    device: 'nasal-cannula',
    specific: true,
    needs: ['nasal', 'nc', 'n/c', 'np', 'prongs', 'specs'],
    pattern: new RegExp(
      String.raw`\bnasal (?:cannula[es]?|cannulae|canula|prongs?|specs|spectacles)\b|\bNC\b|\bn\/c\b|` +
        // "NP" also means nurse practitioner, so it and the bare "prongs"/"specs" count only where a
        // device stands: "via NP", "2L NP", "NP 2L" (common practice in UK and Australian orders).
        inDevicePosition(String.raw`(?:NP|prongs|specs)`),
      'gi',
    ),
  },
  {
    device: 'simple-face-mask',
    specific: true,
    needs: ['simple', 'hudson', 'mc mask', 'medium', 'fm'],
    pattern: new RegExp(
      String.raw`\bsimple (?:face )?mask\b|\bHudson(?: mask)?\b|\bMC mask\b|\bmedium[- ]concentration mask\b|` +
        inDevicePosition('(?:FM|SFM)'),
      'gi',
    ),
  },
  {
    device: 'venturi-mask',
    specific: true,
    needs: ['venturi', 'fixed', 'air', 'controlled', 'hafoe', 'mask', 'vm', 'v2', 'v3', 'v4', 'v5', 'v6'],
    pattern: new RegExp(
      String.raw`\bventuri(?: mask)?\b|\bfixed[- ]performance(?: mask)?\b|\bair[- ]entrainment(?: mask)?\b|\bcontrolled[- ]oxygen mask\b|\bHAFOE\b|\bV(?:M ?)?(?:24|28|31|35|40|50|60)\b|(?=\d\d ?% ?mask)(?<![\d.])(?:24|28|31|35|40|50|60) ?% ?mask\b|${inDevicePosition('VM')}`,
      'gi',
    ),
  },
  {
    device: 'reservoir-mask',
    specific: true,
    needs: ['non', 'nrb', 'reservoir', 'trauma', 'high', 'mask'],
    pattern:
      /\bnon[- ]?re-?breath(?:er|ing)(?: (?:reservoir )?mask)?\b|\bNRBM?\b|\breservoir[- ](?:bag )?mask\b|\btrauma mask\b|\bhigh[- ]concentration mask\b|(?<![\d.])15 ?L mask\b/gi,
  },
  {
    device: 'tracheostomy-mask',
    specific: true,
    needs: ['trach', 'stoma'],
    pattern: /\b(?:trach|trache|trachy|tracheostomy|tracheal) (?:mask|collar)\b|\bstoma mask\b/gi,
  },
  {
    device: 'cpap-niv',
    specific: true,
    needs: ['pap', 'niv', 'level', 'nippv', 'continuous', 'invasive'],
    pattern:
      /\bC-?PAP\b|\bNIV\b|\bBi-?PAP\b|\bBPAP\b|\bbi-?level\b|\bNIPPV\b|\bcontinuous positive airway pressure\b|\bnon[- ]?invasive (?:positive[- ]pressure )?ventilation\b/gi,
  },
  { device: 'high-flow-nasal-cannula', specific: false, needs: ['high'], pattern: /\bhigh[- ]?flow\b/gi },
  { device: 'simple-face-mask', specific: false, needs: ['mask'], pattern: /\b(?:face|oxygen|O2) ?mask\b/gi },
];

/** A `needs` list as one case-insensitive test (a word list holds no pattern syntax but "/"). */
function needsTest(needs: readonly string[]): RegExp {
  return new RegExp(needs.map((word) => word.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')).join('|'), 'i');
}

/**
 * Each pattern with its `needs` compiled once into one test. Testing the text with it costs a few
 * times less than searching a lower-cased copy for each word in turn, which cost about what it saved.
 * Only ASCII letters match the patterns' letters, and the test's, case-insensitively (no u flag), so
 * the test finds a needed word wherever the pattern could match.
 */
export const GATED_DEVICE_PATTERNS: readonly (DevicePattern & { readonly gate: RegExp })[] = DEVICE_PATTERNS.map((p) => ({
  ...p,
  gate: needsTest(p.needs),
}));

/** Words that make a device mention history, a plan or a negation rather than the order. */
const NOT_THE_ORDER =
  /\b(?:previous(?:ly)?|prior|home|history|hx|was on|weaned|stepped down|step down from|not|no|nil|avoid|instead of|escalate|escalating|step up|consider|if)\b/i;

export function findDeviceMentions(text: string): readonly DeviceMention[] {
  const found: DeviceMention[] = [];
  for (const { device, pattern, specific, gate } of GATED_DEVICE_PATTERNS) {
    if (!gate.test(text)) {
      continue;
    }
    for (const m of allMatches(pattern, text)) {
      const start = m.index;
      const end = start + m[0].length;
      const overlaps = found.some((f) => start < f.end && end > f.start);
      if (!overlaps) {
        found.push({ device, text: m[0], start, end, specific });
      }
    }
  }
  return found.sort((a, b) => a.start - b.start);
}

/** True when the words before `index` in its clause say it is not what is being ordered. */
export function isOutsideTheOrder(text: string, index: number): boolean {
  const clause = clauseBefore(text, index);
  // Only the words since the last comma: "2L NC, home NIV" guards NIV, not the cannula after it.
  return NOT_THE_ORDER.test(clause.slice(clause.lastIndexOf(',') + 1));
}

export interface DeviceTextRead {
  readonly device: DeviceKind;
  readonly deviceText: string;
  /** Other device kinds the same text names (outside history and plans); the caller notes these. */
  readonly alsoNamed: readonly DeviceKind[];
}

/** The device the text orders, if it names one. */
export function readDeviceText(text: string): DeviceTextRead | undefined {
  const current = findDeviceMentions(text).filter((m) => !isOutsideTheOrder(text, m.start));
  const chosen = current.find((m) => m.specific) ?? current[0];
  if (chosen === undefined) {
    return undefined;
  }
  const others = current
    .filter((m) => m.specific && m.device !== chosen.device)
    .map((m) => m.device)
    .filter((d, i, all) => all.indexOf(d) === i);
  return { device: chosen.device, deviceText: chosen.text, alsoNamed: others };
}
