import type { ProfileSummary } from './cpu-profile.js';
import { fixed, markdownTable, whole } from './report.js';

/** The CPU profiles as tables and one computed sentence each, for the terminal and the doc. */

const AREA_ROWS = 12;

export function profileSection(title: string, summary: ProfileSummary): string {
  const self = markdownTable(
    ['frame (self time)', 'area', '% of busy time'],
    summary.topSelf.map((f) => [`\`${f.frame}\``, f.area, fixed(f.percent, 1)]),
  );
  const inclusive = markdownTable(
    ['our function (with what it calls)', '% of busy time'],
    summary.topInclusive.map((f) => [`\`${f.frame}\``, fixed(f.percent, 1)]),
  );
  const shown = summary.byArea.slice(0, AREA_ROWS);
  const rest = summary.byArea.slice(AREA_ROWS).reduce((sum, a) => sum + a.percent, 0);
  const areas = markdownTable(
    ['area (self time)', '% of busy time'],
    [
      ...shown.map((a) => [a.area, fixed(a.percent, 1)]),
      ...(rest > 0 ? [[`${summary.byArea.length - AREA_ROWS} other areas`, fixed(rest, 1)]] : []),
    ],
  );
  return [
    `### ${title}`,
    '',
    `${whole(summary.busySamples)} busy samples; idle ${fixed(summary.idlePercent, 1)} % of the time.`,
    '',
    areas,
    '',
    self,
    '',
    inclusive,
  ].join('\n');
}

/** Busy time by kind of code, and the widest of our functions, as one sentence. */
export function dominantAreas(summary: ProfileSummary): string {
  const share = (test: (area: string) => boolean): number =>
    summary.byArea.filter((a) => test(a.area)).reduce((sum, a) => sum + a.percent, 0);
  const ours = share((area) => area.startsWith('src/'));
  const npm = share((area) => area.startsWith('npm: '));
  const zod = share((area) => area === 'npm: zod');
  const internals = share((area) => area === 'node internals');
  const native = share((area) => area.startsWith('native'));
  const collector = share((area) => area === '(garbage collector)');
  const harness = share((area) => area === 'bench harness');
  const widest = summary.topInclusive
    .slice(0, 5)
    .map((f) => `\`${f.frame}\` ${fixed(f.percent, 1)} %`)
    .join(', ');
  return (
    `busy time splits into our code (src/) ${fixed(ours, 1)} %, npm packages ${fixed(npm, 1)} % (zod ${fixed(zod, 1)} %), ` +
    `node internals ${fixed(internals, 1)} %, native code ${fixed(native, 1)} %, the garbage collector ${fixed(collector, 1)} %` +
    (harness > 0 ? `, the bench's own loop ${fixed(harness, 1)} %` : '') +
    `. Our widest functions, with what they call: ${widest}.`
  );
}
