/**
 * Text a caller chose (a hook instance, a token's issuer or key id, a service id from the path, a
 * proxy's reviewer header) is cut before it is logged, so one request cannot write a line of
 * megabytes that fills a disk or drowns the lines around it. The marker keeps the original length,
 * which is itself a clue for the operator.
 */

/** Characters of one caller-controlled string kept in a log line. */
export const LOGGED_TEXT_MAX_CHARS = 200;

/** Items of one caller-controlled list kept in a log line. */
export const LOGGED_LIST_MAX_ITEMS = 50;

/** `text` as is when short enough, else its first `max` characters and `…[cut from N chars]`. */
export function capText(text: string, max: number = LOGGED_TEXT_MAX_CHARS): string {
  if (text.length <= max) {
    return text;
  }
  // Never split a surrogate pair, so the line stays valid UTF-8 once JSON-encoded.
  const kept = text.slice(0, max);
  const safe = /[\uD800-\uDBFF]$/.test(kept) ? kept.slice(0, -1) : kept;
  return `${safe}…[cut from ${text.length} chars]`;
}

/** capText, passing undefined through. */
export function capOptional(text: string | undefined, max: number = LOGGED_TEXT_MAX_CHARS): string | undefined {
  return text === undefined ? undefined : capText(text, max);
}

/** A list of caller-controlled strings: each capped, and the list cut to `maxItems` with a count. */
export function capList(items: readonly string[], maxItems: number = LOGGED_LIST_MAX_ITEMS): string[] {
  const kept = items.slice(0, maxItems).map((item) => capText(item));
  return items.length > maxItems ? [...kept, `…[${items.length - maxItems} more]`] : kept;
}
