import type { FhirResource } from '../fhir/gathered-data.js';
import { isUnderServer } from './fhir-client.js';
import type { PrefetchReading } from './read-prefetch.js';

/**
 * Following a search's `next` links (FHIR R4 §Paging: `Bundle.link[relation=next]`) without letting
 * a FHIR server or a prefetch value lead the service on for ever: a page cap, a cap on resources kept
 * per key, no page read twice (a `next` that points back at a page already read is a loop), and no
 * link off the FHIR server the client named. Whatever stops the walk early marks the key incomplete,
 * and the caller names it on the card, since a condition on an unread page can change the target.
 */

/** Resources kept per prefetch key, all pages together; the rest are not read (the key is incomplete). */
export const MAX_RESOURCES_PER_KEY = 1000;

export interface FirstPage {
  readonly resources: readonly FhirResource[];
  readonly nextUrl: string | undefined;
}

export interface PagingOptions {
  /** The FHIR server the client named; undefined when the service may not call one. */
  readonly fhirServer: string | undefined;
  /** The URL the first page came from, when the service fetched it itself. */
  readonly firstUrl: URL | undefined;
  /** Pages in all, the first included. */
  readonly maxPages: number;
  /** Reads one further page, already vetted for the key; undefined when the read failed. */
  readonly fetchPage: (url: URL) => Promise<PrefetchReading | undefined>;
}

export interface PagedResources {
  readonly resources: readonly FhirResource[];
  /** More results existed than were read. */
  readonly incomplete: boolean;
}

function resolveNext(next: string, fhirServer: string): URL | undefined {
  try {
    const url = new URL(next, `${fhirServer.replace(/\/+$/, '')}/`);
    return isUnderServer(url, fhirServer) ? url : undefined;
  } catch {
    return undefined;
  }
}

export async function followPages(first: FirstPage, options: PagingOptions): Promise<PagedResources> {
  const resources = first.resources.slice(0, MAX_RESOURCES_PER_KEY);
  if (first.resources.length > MAX_RESOURCES_PER_KEY) {
    return { resources, incomplete: true };
  }
  const seen = new Set<string>(options.firstUrl === undefined ? [] : [options.firstUrl.href]);
  let next = first.nextUrl;
  let pages = 1;
  while (next !== undefined) {
    const { fhirServer } = options;
    if (fhirServer === undefined || pages >= options.maxPages) {
      return { resources, incomplete: true };
    }
    const url = resolveNext(next, fhirServer);
    if (url === undefined || seen.has(url.href)) {
      return { resources, incomplete: true };
    }
    seen.add(url.href);
    const page = await options.fetchPage(url);
    if (page === undefined || page.kind === 'absent' || page.kind === 'unusable') {
      return { resources, incomplete: true };
    }
    pages += 1;
    if (page.kind === 'empty') {
      break;
    }
    const room = MAX_RESOURCES_PER_KEY - resources.length;
    resources.push(...page.resources.slice(0, room));
    if (page.resources.length > room) {
      return { resources, incomplete: true };
    }
    next = page.nextUrl;
  }
  return { resources, incomplete: false };
}
