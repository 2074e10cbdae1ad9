/**
 * HTML built by a tagged template that escapes every interpolation unless it is an already-rendered
 * fragment. `html\`<td>${summary}</td>\`` cannot inject markup whatever the summary holds; the only
 * way to put markup in is `raw()`, which is rare and easy to grep for. Pure.
 */

const ESCAPES: Readonly<Record<string, string>> = {
  '&': '&amp;',
  '<': '&lt;',
  '>': '&gt;',
  '"': '&quot;',
  "'": '&#39;',
  '`': '&#96;',
};

/**
 * Escapes text for an HTML text node or a quoted attribute value (HTML Living Standard §13.1.2.3:
 * in a double- or single-quoted attribute only the quote and `&` end or change the value; `<` and
 * `>` are escaped so the text is also safe between tags). Control characters other than tab, line
 * feed and carriage return are dropped: HTML parsers report them as errors and some render them.
 */
export function escapeHtml(text: string): string {
  // eslint-disable-next-line no-control-regex -- removing control characters is the point
  return text.replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/g, '').replace(/[&<>"'`]/g, (c) => ESCAPES[c] ?? c);
}

/** Markup that is already safe: built by `html`, or (rarely) vouched for with `raw`. */
export class HtmlFragment {
  readonly #markup: string;

  constructor(markup: string) {
    this.#markup = markup;
  }

  toString(): string {
    return this.#markup;
  }
}

/** What may be interpolated: text and numbers are escaped, fragments go in as they are. */
export type HtmlValue = string | number | HtmlFragment | undefined | null | false | readonly HtmlValue[];

function render(value: HtmlValue): string {
  if (value === undefined || value === null || value === false) {
    return '';
  }
  if (value instanceof HtmlFragment) {
    return value.toString();
  }
  if (Array.isArray(value)) {
    return (value as readonly HtmlValue[]).map(render).join('');
  }
  if (typeof value === 'number') {
    return escapeHtml(Number.isFinite(value) ? String(value) : '');
  }
  return escapeHtml(String(value));
}

/** The tagged template: literal parts are markup, every `${value}` is escaped unless a fragment. */
export function html(strings: TemplateStringsArray, ...values: readonly HtmlValue[]): HtmlFragment {
  let out = strings[0] ?? '';
  values.forEach((value, index) => {
    out += render(value) + (strings[index + 1] ?? '');
  });
  return new HtmlFragment(out);
}

/**
 * Wraps markup that is already rendered (an SVG built here, a fragment joined by hand). Never pass it
 * text that came from a store, a request or a file.
 */
export function raw(markup: string): HtmlFragment {
  return new HtmlFragment(markup);
}

/** Joins fragments with a separator that is itself escaped text. */
export function joinHtml(parts: readonly HtmlValue[], separator = ''): HtmlFragment {
  return new HtmlFragment(parts.map(render).join(escapeHtml(separator)));
}
