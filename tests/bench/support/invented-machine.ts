import type { RunReport } from '../../../bench/report.js';

/** The machine block of a bench report for the page tests: invented, quiet, with a clean tree. */
export function inventedMachine(date: string, commit: string): RunReport['machine'] {
  return {
    date,
    node: 'v20.0.0',
    cpus: 2,
    cpuModel: 'invented CPU',
    loadAverage: [1, 1, 1],
    loadAverageEnd: [1, 1, 1],
    platform: 'linux',
    commit,
    uncommitted: [],
  };
}
