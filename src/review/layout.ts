import { html, raw, type HtmlFragment, type HtmlValue } from './html.js';

/**
 * The shared frame of every review page: one inline style sheet (allowed by its hash in the
 * Content-Security-Policy, review-headers.ts), no scripts, no external assets. Laid out for a ward
 * computer about 1024 px wide and printable on A4. Pure.
 */

/** The one style sheet. Its exact text is hashed for the CSP, so it is a constant. */
export const REVIEW_STYLE = `
:root { color-scheme: light; --ink: #1b1b1b; --muted: #555; --line: #c8c8c8; --band: #d8ecd8;
  --accent: #0b4f8a; --warn: #8a5a00; --crit: #a11d1d; }
* { box-sizing: border-box; }
body { margin: 0; font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, Arial, sans-serif;
  color: var(--ink); background: #fff; }
header.site { background: #eef2f6; border-bottom: 1px solid var(--line); padding: 0.5rem 1rem;
  display: flex; gap: 1.5rem; align-items: baseline; flex-wrap: wrap; }
header.site strong { font-size: 1.05rem; }
header.site nav a { margin-right: 1rem; }
main { max-width: 1000px; margin: 0 auto; padding: 1rem; }
h1 { font-size: 1.35rem; margin: 0.5rem 0 0.75rem; }
h2 { font-size: 1.1rem; margin: 1.5rem 0 0.5rem; border-bottom: 1px solid var(--line); }
a { color: var(--accent); }
table { border-collapse: collapse; width: 100%; margin: 0.5rem 0 1rem; font-size: 0.92rem; }
th, td { border: 1px solid var(--line); padding: 0.3rem 0.45rem; text-align: left; vertical-align: top; }
th { background: #f4f6f8; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
form.filters { display: flex; flex-wrap: wrap; gap: 0.5rem 1rem; align-items: flex-end;
  background: #f7f7f7; border: 1px solid var(--line); padding: 0.6rem; }
form.filters label { display: flex; flex-direction: column; font-size: 0.85rem; }
form.filters select, form.filters input { font: inherit; padding: 0.15rem 0.25rem; min-width: 9rem; }
.notice { border-left: 4px solid var(--warn); background: #fff8e6; padding: 0.5rem 0.75rem; }
.error { border-left: 4px solid var(--crit); background: #fdecec; padding: 0.5rem 0.75rem; }
.muted { color: var(--muted); }
.ind-critical { color: var(--crit); font-weight: 600; }
.ind-warning { color: var(--warn); font-weight: 600; }
.flag { color: var(--crit); font-weight: 600; }
.pager { display: flex; gap: 1.5rem; margin: 0.5rem 0; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 0.2rem 1rem; margin: 0.5rem 0; }
dl.facts dt { font-weight: 600; }
dl.facts dd { margin: 0; }
.markdown { border: 1px solid var(--line); padding: 0.25rem 0.75rem; background: #fcfcfc; }
.markdown ul { padding-left: 1.25rem; }
svg { max-width: 100%; height: auto; font: 11px system-ui, Arial, sans-serif; }
figure { margin: 0.5rem 0 1rem; }
svg .axis line, svg .axis path { stroke: #888; }
svg .axis line.grid { stroke: #e4e4e4; }
td ul { margin: 0; padding-left: 1.1rem; }
details summary { cursor: pointer; }
footer.cautions { max-width: 1000px; margin: 1rem auto; padding: 0 1rem 1rem; font-size: 0.85rem;
  color: var(--muted); }
@media print {
  header.site nav, form.filters, .pager { display: none; }
  body { font-size: 11pt; }
  main, footer.cautions { max-width: none; padding: 0; }
  a { color: inherit; text-decoration: none; }
  table, svg { page-break-inside: avoid; }
  details:not([open]) { display: none; }
}
`;

// Fixed text, never data, so it goes in as markup: escaping its quotes would change its CSP hash.
const REVIEW_STYLE_FRAGMENT = raw(REVIEW_STYLE);

/** Shown on every page: the service advises, and oximetry has limits (docs/review.md). */
export const REVIEW_CAUTIONS =
  'Advisory only: these records show what the service advised and what clinicians did; they do not ' +
  'replace clinical judgement or local policy. Pulse oximetry can over-read in people with darker ' +
  'skin and is unreliable with poor perfusion, motion, nail varnish and carbon monoxide poisoning.';

export interface PageInput {
  /** The page's title (also the <title>). */
  readonly title: string;
  readonly body: HtmlValue;
  /** The site time zone every time on the page is shown in. */
  readonly timeZone: string;
  /** Which page of the navigation this is, if any. */
  readonly current?: 'list' | 'summary';
}

function navLink(href: string, label: string, current: boolean): HtmlFragment {
  return current ? html`<a href="${href}" aria-current="page">${label}</a>` : html`<a href="${href}">${label}</a>`;
}

/** A whole page as HTML text. */
export function renderPage(input: PageInput): string {
  return html`<!doctype html>
<html lang="en-GB">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="referrer" content="no-referrer">
<title>${input.title} · Oxygen advisory review</title>
<style>${REVIEW_STYLE_FRAGMENT}</style>
</head>
<body>
<header class="site"><strong>Oxygen advisory review</strong>
<nav>${navLink('/review', 'Advisories', input.current === 'list')}${navLink('/review/summary', 'Summary by rule', input.current === 'summary')}</nav>
<span class="muted" id="time-zone">Times in ${input.timeZone}</span></header>
<main>
<h1>${input.title}</h1>
${input.body}
</main>
<footer class="cautions"><p>${REVIEW_CAUTIONS}</p></footer>
</body>
</html>
`.toString();
}

/** A short page for a refusal or an error, with nothing from the request echoed back. */
export function renderMessagePage(input: { readonly title: string; readonly message: HtmlValue; readonly timeZone: string }): string {
  return renderPage({
    title: input.title,
    timeZone: input.timeZone,
    body: html`<div class="error" id="page-message" role="alert">${input.message}</div>`,
  });
}
