import { z } from 'zod';
import { numberText } from './parse-options.js';

/**
 * One convention for an FiO2 typed on the command line, for every command: a number up to 1 is a
 * fraction (0.28), a number above 1 is a percentage (28). Both name the same gas, and the commands
 * take the fraction. A number between 1 and 21, or below 0.21, is neither a fraction nor a
 * percentage of a breathable gas (room air is 21 %, 0.21), so it is refused with both forms shown
 * rather than guessed at.
 */

export const FIO2_CONVENTION =
  'a fraction from 0.21 to 1 (e.g. 0.28) or a percentage from 21 to 100 (e.g. 28); a number above 1 is read as a percentage';

/** The fraction a typed FiO2 stands for, or the reason it stands for none. */
export function readFio2Text(value: number): { readonly fraction: number } | { readonly problem: string } {
  const fraction = value > 1 ? value / 100 : value;
  if (fraction >= 0.21 && fraction <= 1) {
    // Rounded to 4 places so 28 and 0.28 give the same number (28 / 100 is not exactly 0.28).
    return { fraction: Math.round(fraction * 10_000) / 10_000 };
  }
  const why =
    value > 100
      ? 'is above 100 %'
      : value > 1
        ? `read as ${value} % is below room air (21 %); as a fraction it would be above 1`
        : 'is below room air (0.21)';
  return { problem: `${value} ${why}: give ${FIO2_CONVENTION}` };
}

/** A zod schema for an FiO2 option given as text, producing the fraction. */
export const fio2Text = numberText.transform((value, ctx) => {
  const read = readFio2Text(value);
  if ('problem' in read) {
    ctx.addIssue({ code: 'custom', message: read.problem });
    return z.NEVER;
  }
  return read.fraction;
});
