import { percentOf } from '../core/audit/audit-wards.js';
import type { AuditFigures, AuditTime, CountOf, WardFigures } from '../core/audit/types.js';

/**
 * The audit figures as words and a plain text table for the terminal, and as JSON for scripts.
 * Every share is shown with its count and denominator ("7 of 9 (78 %)"), so a percentage of a handful
 * of patients is never read as a rate. Pure.
 */

export function formatCountOf(c: CountOf): string {
  const percent = percentOf(c.count, c.of);
  return `${c.count} of ${c.of} (${percent === undefined ? '–' : `${percent} %`})`;
}

/** Minutes as hours with one decimal: "31.5 h". */
export function formatHours(minutes: number): string {
  return `${(Math.round((minutes / 60) * 10) / 10).toFixed(1)} h`;
}

/** A part of the observed SpO2 time as a whole percentage, "–" with nothing observed. */
export function formatTimeShare(partMinutes: number, time: AuditTime): string {
  const percent = percentOf(partMinutes, time.observedMinutes);
  return percent === undefined ? '–' : `${percent} %`;
}

export const MEASURES = [
  { key: 'withOrder', label: 'On oxygen with an order', short: 'Order' },
  { key: 'withTargetRange', label: 'Order with a target range', short: 'Target range' },
  { key: 'withRangeForRisk', label: 'Range the patient\u2019s risk calls for', short: 'Range for risk' },
  { key: 'atRiskOnStandardRange', label: 'At-risk patients on the standard range', short: 'At risk on standard' },
] as const;

export const TIME_PARTS = [
  { key: 'inRangeMinutes', label: 'in range', fill: '#3d7a3d' },
  { key: 'aboveOnOxygenMinutes', label: 'above on oxygen', fill: '#b5542a' },
  { key: 'belowMinutes', label: 'below', fill: '#2a5db5' },
  { key: 'aboveOnAirMinutes', label: 'above on air', fill: '#b8b8b8' },
] as const;

function row(w: WardFigures): string[] {
  return [
    w.ward,
    String(w.patients),
    String(w.onOxygen),
    ...MEASURES.map((m) => formatCountOf(w[m.key])),
    formatHours(w.time.observedMinutes),
    ...TIME_PARTS.slice(0, 3).map((p) => formatTimeShare(w.time[p.key], w.time)),
  ];
}

/** The summary table for stdout: one row a ward and one overall, columns padded. */
export function renderAuditTable(figures: AuditFigures): string {
  const header = [
    'Ward',
    'Patients',
    'On O2',
    ...MEASURES.map((m) => m.short),
    'SpO2 observed',
    'In range',
    'Above on O2',
    'Below',
  ];
  const rows = [header, ...figures.wards.map(row), row(figures.overall)];
  const widths = header.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  const line = (r: readonly string[]): string => r.map((cell, i) => cell.padEnd(widths[i] ?? 0)).join('  ').trimEnd();
  const rule = widths.map((w) => '-'.repeat(w)).join('  ');
  const body = [line(header), rule, ...rows.slice(1, -1).map(line), rule, line(rows[rows.length - 1] ?? [])];
  return `${body.join('\n')}\n`;
}

const round1 = (minutes: number): number => Math.round(minutes * 10) / 10;

function timeJson(t: AuditTime): AuditTime {
  return {
    inRangeMinutes: round1(t.inRangeMinutes),
    aboveOnOxygenMinutes: round1(t.aboveOnOxygenMinutes),
    aboveOnAirMinutes: round1(t.aboveOnAirMinutes),
    belowMinutes: round1(t.belowMinutes),
    observedMinutes: round1(t.observedMinutes),
    unobservedMinutes: round1(t.unobservedMinutes),
    notJudgedMinutes: round1(t.notJudgedMinutes),
  };
}

function wardJson(w: WardFigures): Record<string, unknown> {
  const withPercent = (c: CountOf): Record<string, unknown> => ({ ...c, percent: percentOf(c.count, c.of) ?? null });
  return {
    ward: w.ward,
    patients: w.patients,
    underMinimumAge: w.underMinimumAge,
    onOxygen: w.onOxygen,
    withOrder: withPercent(w.withOrder),
    withTargetRange: withPercent(w.withTargetRange),
    withRangeForRisk: withPercent(w.withRangeForRisk),
    atRiskOnStandardRange: withPercent(w.atRiskOnStandardRange),
    time: timeJson(w.time),
  };
}

/** The figures as JSON: counts with denominators and whole percentages, minutes to 0.1. */
export function auditJson(
  figures: AuditFigures,
  about: {
    readonly policy: { readonly id: string; readonly version: string; readonly contentSha256: string };
    /** What was read: files, resources not used, lines that were not resources. */
    readonly source: { readonly files: number; readonly resourcesNotUsed: number; readonly malformedLines: number };
  },
): Record<string, unknown> {
  return {
    period: figures.period,
    policy: about.policy,
    source: about.source,
    wards: figures.wards.map(wardJson),
    overall: wardJson(figures.overall),
  };
}
