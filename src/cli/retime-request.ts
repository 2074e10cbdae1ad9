/**
 * Shifts every FHIR dateTime/instant in a saved request by the same amount, so that a demo or test
 * request recorded on one day reads as if the order were being signed at `to`. Dates without a time
 * (birthDate, onsetDate) are left alone: a patient's age must not change with the demo clock.
 */

const DATE_TIME = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})$/;

/** The signing moment a request describes: the latest `authoredOn` among its draft orders. */
export function requestMoment(request: unknown): Date | undefined {
  const entries = (request as { context?: { draftOrders?: { entry?: unknown } } } | null)?.context?.draftOrders?.entry;
  if (!Array.isArray(entries)) {
    return undefined;
  }
  let latest: number | undefined;
  for (const entry of entries) {
    const authoredOn = (entry as { resource?: { authoredOn?: unknown } } | null)?.resource?.authoredOn;
    if (typeof authoredOn === 'string' && DATE_TIME.test(authoredOn)) {
      const time = Date.parse(authoredOn);
      if (Number.isFinite(time) && (latest === undefined || time > latest)) {
        latest = time;
      }
    }
  }
  return latest === undefined ? undefined : new Date(latest);
}

function shift(value: unknown, byMs: number): unknown {
  if (typeof value === 'string') {
    if (!DATE_TIME.test(value)) {
      return value;
    }
    const time = Date.parse(value);
    return Number.isFinite(time) ? new Date(time + byMs).toISOString().replace('.000Z', 'Z') : value;
  }
  if (Array.isArray(value)) {
    return value.map((item) => shift(item, byMs));
  }
  if (value !== null && typeof value === 'object') {
    return Object.fromEntries(Object.entries(value).map(([key, inner]) => [key, shift(inner, byMs)]));
  }
  return value;
}

export function retimeRequest(request: unknown, from: Date, to: Date): unknown {
  return shift(request, to.getTime() - from.getTime());
}
