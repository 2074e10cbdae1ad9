/**
 * Progress on stderr for a long command: a bar redrawn in place on a terminal, a plain line every
 * `stepPercent` otherwise (a log file or CI), nothing when quiet. Draws only when the whole percent
 * changes, so a million orders cost a hundred writes. Pure apart from the `write` it is given.
 */

export type ProgressMode = 'bar' | 'lines' | 'quiet';

const BAR_WIDTH = 30;

export function createProgress(
  mode: ProgressMode,
  write: (text: string) => void,
  what: string,
  stepPercent = 10,
): { readonly update: (done: number, total: number) => void; readonly finish: () => void } {
  let lastPercent = -1;
  let drawn = false;
  return {
    update: (done, total) => {
      if (mode === 'quiet' || total <= 0) return;
      const percent = Math.min(100, Math.floor((100 * done) / total));
      if (percent === lastPercent) return;
      if (mode === 'lines') {
        if (Math.floor(percent / stepPercent) === Math.floor(lastPercent / stepPercent) && lastPercent >= 0) {
          lastPercent = percent;
          return;
        }
        lastPercent = percent;
        write(`${what}: ${done} of ${total} (${percent} %)\n`);
        return;
      }
      lastPercent = percent;
      const filled = Math.round((BAR_WIDTH * percent) / 100);
      write(`\r${what} [${'#'.repeat(filled)}${'.'.repeat(BAR_WIDTH - filled)}] ${String(percent).padStart(3)} % ${done}/${total}`);
      drawn = true;
    },
    finish: () => {
      if (mode === 'bar' && drawn) write('\n');
    },
  };
}
