import type { BloodGas } from '../core/types.js';
import type { GasField, Specimen } from './codes.js';
import type { Reading } from './read-observation-values.js';

/**
 * Groups blood gas readings into samples. EHRs often file the pH, PCO2, PO2 and HCO3 of one sample
 * as separate Observations whose times differ by seconds or minutes; split apart, an acidotic
 * hypercapnic gas can lose its pH or its PCO2 and its critical card with it. So:
 * 1. Values FHIR ties together are one sample whatever their times: the same `Observation.specimen`
 *    reference, or members of one panel (`hasMember`). Ties are transitive (a panel member that names
 *    a specimen brings that specimen's other values along).
 * 2. Other values join the sample whose first value was taken no more than `groupingMinutes` before
 *    them (policy `freshness.bloodGasGroupingMinutes`, default 10: common practice; an analyser
 *    reports one sample's values together, and a repeat gas is usually taken 30–60 min later, BTS
 *    2017 Tables 2–4). The window runs from the sample's first value, not from the last one joined,
 *    so values filed every few minutes cannot chain into one endless sample.
 * 3. Arterial and venous values are never one sample. A value whose code names no specimen (serum
 *    HCO3, blood base excess, blood pCO2) joins an arterial sample in its window, else a venous one.
 * 4. Two samples FHIR tells apart (two specimens, two panels) are never merged by the window; a value
 *    with no tie joins the nearer earlier one.
 * 5. A field reported twice in one sample (a corrected or re-sent result) takes the value filed last
 *    (`issued`, else the effective time), a corrected or amended status winning a tie.
 *
 * The sample carries the time of its earliest value: labs stamp a result with the collection time,
 * and a later stamp on a value of the same sample is filing or processing delay. The earliest time is
 * when the blood was drawn, so the gas's age and the FiO2 in force at the gas are judged at the draw,
 * and a gas never looks fresher than it is.
 */

export interface GasSample {
  readonly gas: BloodGas;
  readonly atMs: number;
  /** The reference of one member, for notes. */
  readonly reference: string | undefined;
}

const REPORTED_KEY: Readonly<Record<GasField, string>> = {
  ph: 'ph',
  po2: 'pao2',
  pco2: 'paco2',
  hco3: 'hco3',
  baseExcess: 'baseExcess',
};

function specimenOf(reading: Reading): Specimen {
  return reading.code.kind === 'gas' ? reading.code.specimen : 'unknown';
}

/** Later filing first; at the same filing time a corrected result first, then the later effective time. */
function filedLaterFirst(a: Reading, b: Reading): number {
  return b.filedMs - a.filedMs || Number(b.corrected) - Number(a.corrected) || b.atMs - a.atMs;
}

function buildSample(readings: readonly Reading[], specimen: Specimen): GasSample {
  const values: Partial<Record<GasField, number>> = {};
  const reported: Record<string, { readonly value: number; readonly unit: string }> = {};
  for (const r of [...readings].sort(filedLaterFirst)) {
    if (r.code.kind !== 'gas' || values[r.code.field] !== undefined) {
      continue;
    }
    values[r.code.field] = r.value;
    reported[REPORTED_KEY[r.code.field]] = r.reported;
  }
  const first = [...readings].sort((a, b) => a.atMs - b.atMs)[0];
  return {
    gas: {
      at: first?.at ?? '',
      ...(first === undefined ? {} : { atMs: Date.parse(first.at) }),
      specimen,
      ph: values.ph,
      pao2MmHg: values.po2,
      paco2MmHg: values.pco2,
      hco3MmolPerL: values.hco3,
      baseExcessMmolPerL: values.baseExcess,
      reported,
    },
    atMs: first?.atMs ?? 0,
    reference: first?.reference,
  };
}

function splitBySpecimen(group: readonly Reading[]): GasSample[] {
  const arterial = group.filter((r) => specimenOf(r) === 'arterial');
  const venous = group.filter((r) => specimenOf(r) === 'venous');
  const unknown = group.filter((r) => specimenOf(r) === 'unknown');
  const samples: GasSample[] = [];
  if (arterial.length > 0) {
    samples.push(buildSample([...arterial, ...unknown], 'arterial'));
  }
  if (venous.length > 0) {
    samples.push(buildSample(arterial.length > 0 ? venous : [...venous, ...unknown], 'venous'));
  }
  if (arterial.length === 0 && venous.length === 0 && unknown.length > 0) {
    samples.push(buildSample(unknown, 'unknown'));
  }
  return samples;
}

/** Readings FHIR ties together by a shared specimen or panel key, found by union-find. */
function tiedGroups(keyed: readonly Reading[]): Reading[][] {
  const parent = keyed.map((_, i) => i);
  const root = (i: number): number => {
    let r = i;
    while (parent[r] !== r) {
      r = parent[r] ?? r;
    }
    parent[i] = r;
    return r;
  };
  const firstWithKey = new Map<string, number>();
  for (const [i, r] of keyed.entries()) {
    for (const key of r.sampleKeys) {
      const j = firstWithKey.get(key);
      if (j === undefined) {
        firstWithKey.set(key, i);
      } else {
        parent[root(i)] = root(j);
      }
    }
  }
  const groups = new Map<number, Reading[]>();
  for (const [i, r] of keyed.entries()) {
    const group = groups.get(root(i)) ?? [];
    group.push(r);
    groups.set(root(i), group);
  }
  return [...groups.values()];
}

interface Cluster {
  readonly anchorMs: number;
  specimen: Specimen;
  tied: boolean;
  readonly members: Reading[];
}

interface Unit {
  readonly anchorMs: number;
  readonly specimen: Specimen;
  readonly tied: boolean;
  readonly members: readonly Reading[];
}

function specimenOfGroup(members: readonly Reading[]): Specimen {
  const kinds = new Set(members.map(specimenOf));
  return kinds.has('arterial') ? 'arterial' : kinds.has('venous') ? 'venous' : 'unknown';
}

function compatible(a: Specimen, b: Specimen): boolean {
  return a === b || a === 'unknown' || b === 'unknown';
}

/** Lower is better: an exact specimen match, then arterial for a value that names no specimen. */
function preference(cluster: Cluster, unit: Unit): number {
  if (cluster.specimen === unit.specimen) return 0;
  if (unit.specimen === 'unknown') return cluster.specimen === 'arterial' ? 1 : 2;
  return 3;
}

/**
 * The cluster a unit joins: one whose first value is at most the window before it, of a compatible
 * specimen, not both tied; the best preference, then the latest anchor, then the earliest made.
 * Clusters are made oldest first, so only the newest few, back to the window's start, are looked at.
 */
function bestCluster(clusters: readonly Cluster[], unit: Unit, windowMs: number): Cluster | undefined {
  let best: Cluster | undefined;
  let bestPreference = Number.POSITIVE_INFINITY;
  for (let i = clusters.length - 1; i >= 0; i -= 1) {
    const c = clusters[i] as Cluster;
    if (unit.anchorMs - c.anchorMs > windowMs) {
      break;
    }
    if (!compatible(c.specimen, unit.specimen) || (c.tied && unit.tied)) {
      continue;
    }
    // Walking back, anchors only fall: an equal one found later was made earlier and wins the tie.
    const p = preference(c, unit);
    if (best === undefined || p < bestPreference || (p === bestPreference && c.anchorMs >= best.anchorMs)) {
      best = c;
      bestPreference = p;
    }
  }
  return best;
}

/** Groups gas readings into samples, newest first. `groupingMinutes` is the policy's window. */
export function groupBloodGases(readings: readonly Reading[], groupingMinutes: number): readonly GasSample[] {
  const windowMs = Math.max(0, groupingMinutes) * 60_000;
  const units: Unit[] = [
    ...tiedGroups(readings.filter((r) => r.sampleKeys.length > 0)).map((members) => ({
      anchorMs: Math.min(...members.map((r) => r.atMs)),
      specimen: specimenOfGroup(members),
      tied: true,
      members,
    })),
    ...readings
      .filter((r) => r.sampleKeys.length === 0)
      .map((r) => ({ anchorMs: r.atMs, specimen: specimenOf(r), tied: false, members: [r] })),
  ];
  // Oldest first; at one moment a tied sample first, so untied values of that moment can join it.
  units.sort((a, b) => a.anchorMs - b.anchorMs || Number(b.tied) - Number(a.tied));

  const clusters: Cluster[] = [];
  for (const unit of units) {
    const best = bestCluster(clusters, unit, windowMs);
    if (best === undefined) {
      clusters.push({ anchorMs: unit.anchorMs, specimen: unit.specimen, tied: unit.tied, members: [...unit.members] });
      continue;
    }
    best.members.push(...unit.members);
    best.tied ||= unit.tied;
    if (best.specimen === 'unknown') {
      best.specimen = unit.specimen;
    }
  }
  const order: Readonly<Record<Specimen, number>> = { arterial: 0, venous: 1, unknown: 2 };
  const samples: GasSample[] = [];
  for (const c of clusters) {
    samples.push(...splitBySpecimen(c.members));
  }
  return samples.sort((a, b) => b.atMs - a.atMs || order[a.gas.specimen] - order[b.gas.specimen]);
}
