/**
 * Shifts every FHIR dateTime/instant in a saved request by the same amount, so that a demo or test
 * request recorded on one day reads as if the order were being signed at `to`. Dates without a time
 * (birthDate, onsetDate) are left alone: a patient's age must not change with the demo clock.
 */

const DATE_TIME = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})$/;

/**
 * The moment a request describes: for an order hook the latest `authoredOn` among its draft orders;
 * for patient-view (no drafts) the latest `effectiveDateTime` among its prefetched observations.
 */
export function requestMoment(request: unknown): Date | undefined {
  const body = request as { hook?: unknown; context?: { draftOrders?: { entry?: unknown } }; prefetch?: { observations?: { entry?: unknown } } } | null;
  if (body?.hook === 'patient-view') {
    return latestTime(body.prefetch?.observations?.entry, 'effectiveDateTime');
  }
  return latestTime(body?.context?.draftOrders?.entry, 'authoredOn');
}

function latestTime(entries: unknown, field: 'authoredOn' | 'effectiveDateTime'): Date | undefined {
  if (!Array.isArray(entries)) {
    return undefined;
  }
  let latest: number | undefined;
  for (const entry of entries) {
    const value = (entry as { resource?: Record<string, unknown> } | null)?.resource?.[field];
    if (typeof value === 'string' && DATE_TIME.test(value)) {
      const time = Date.parse(value);
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
