import { html, type HtmlFragment } from './html.js';
import { WINDOWS, type QueryIssue, type TimeFilters } from './review-query.js';

/**
 * Form fields shared by the list and summary pages. Each field has a stable id (`filter-<name>`) so
 * a browser test can drive it; every value shown comes from the reader's own query or the store's
 * facets and is escaped.
 */

export interface SelectOption {
  readonly value: string;
  readonly label: string;
}

export function selectField(name: string, label: string, options: readonly SelectOption[], selected: string | undefined): HtmlFragment {
  // A value chosen earlier stays selectable even if the facets no longer list it.
  const all = selected === undefined || options.some((o) => o.value === selected) ? options : [...options, { value: selected, label: selected }];
  return html`<label for="filter-${name}">${label}<select id="filter-${name}" name="${name}">
<option value="">any</option>${all.map((o) =>
    o.value === selected
      ? html`<option value="${o.value}" selected>${o.label}</option>`
      : html`<option value="${o.value}">${o.label}</option>`,
  )}</select></label>`;
}

const WINDOW_LABELS: Readonly<Record<keyof typeof WINDOWS, string>> = {
  '12h': 'last 12 hours',
  '24h': 'last 24 hours',
  '72h': 'last 3 days',
  '7d': 'last 7 days',
  '30d': 'last 30 days',
};

/** The time window: a recent span, or from/to days in the site zone. */
export function timeFields(filters: TimeFilters): HtmlFragment {
  const windows = (Object.keys(WINDOWS) as (keyof typeof WINDOWS)[]).map((value) => ({ value, label: WINDOW_LABELS[value] }));
  return html`${selectField('window', 'Time', windows, filters.window)}
<label for="filter-from">From (day)<input id="filter-from" name="from" type="date" value="${filters.from ?? ''}"></label>
<label for="filter-to">To (day, included)<input id="filter-to" name="to" type="date" value="${filters.to ?? ''}"></label>`;
}

/** The polite account of a filter that did not read: which field, and what it must be. */
export function issuesNotice(issues: readonly QueryIssue[]): HtmlFragment {
  return html`<div class="error" id="filter-errors" role="alert"><p>Some filters could not be used, so nothing is listed. Please correct:</p>
<ul>${issues.map((issue) => html`<li data-field="${issue.path}"><strong>${issue.path}</strong>: ${issue.message}</li>`)}</ul></div>`;
}
