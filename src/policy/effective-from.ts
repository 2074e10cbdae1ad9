import type { Policy } from '../core/policy.js';

/**
 * Whether a policy applies yet. `effectiveFrom` is a calendar date at the site (`site.timeZone`): the
 * committee agrees "from 1 March", meaning the hospital's 1 March, wherever the server's clock runs.
 * Loading a policy early is allowed (the committee may load it ahead of the day); the service says so
 * in a warning at start, and `policy show` says so too. Pure: the time comes in as an argument.
 */
export type PolicyInEffect =
  | { readonly kind: 'no-date' }
  | { readonly kind: 'in-effect'; readonly effectiveFrom: string; readonly siteDate: string }
  | { readonly kind: 'not-yet'; readonly effectiveFrom: string; readonly siteDate: string };

/** The calendar date (YYYY-MM-DD) at `now` in an IANA time zone. */
export function dateInZone(now: Date, timeZone: string): string {
  // en-CA formats a date as YYYY-MM-DD, the ISO order the policy file uses.
  return new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(now);
}

export function policyInEffect(policy: Pick<Policy, 'effectiveFrom' | 'site'>, now: Date): PolicyInEffect {
  const { effectiveFrom } = policy;
  if (effectiveFrom === undefined) return { kind: 'no-date' };
  const siteDate = dateInZone(now, policy.site.timeZone);
  // ISO dates of one width compare as text in calendar order.
  return siteDate < effectiveFrom
    ? { kind: 'not-yet', effectiveFrom, siteDate }
    : { kind: 'in-effect', effectiveFrom, siteDate };
}

/** The start-up warning for a policy loaded before its date, or undefined when none is due. */
export function notYetInEffectWarning(policy: Pick<Policy, 'effectiveFrom' | 'site' | 'id' | 'version'>, now: Date): string | undefined {
  const state = policyInEffect(policy, now);
  if (state.kind !== 'not-yet') return undefined;
  return (
    `policy ${policy.id} v${policy.version} is effective from ${state.effectiveFrom}, ` +
    `but the date at the site is ${state.siteDate}: it is in use from now, ahead of that date`
  );
}
