import type { LoadProblem } from '../../config/load-files.js';
import { decideReviewAccess, type ReviewAccessConfig } from '../../security/review-access.js';
import type { PolicySnapshot } from '../../live-policy/policy-snapshot.js';
import { AppError } from '../errors.js';
import { pinnedPolicy } from '../pinned-policy.js';
import { requestState } from '../request-context.js';
import type { RouteHandler } from '../respond.js';

/**
 * `GET /policy`: the policy in force, as the service reads it (parsed and unit-converted), with the
 * full sha256 of the file, when it was loaded, its acknowledgements and warnings. The policy team
 * and the integration engineer check here that a reload took: the hash should match
 * `sha256sum` of the file they meant to load.
 *
 * Who may read it is decided as for the review pages (review-access.ts), not by the CDS client
 * trust: the readers are hospital staff, who sign in through the hospital's proxy, not EHRs holding a
 * signing key. The loopback demo is open, as its review pages are. docs/security.md says more.
 */

export interface PolicyRouteDeps {
  readonly access: ReviewAccessConfig;
  readonly clock: () => Date;
}

/** JSON has no undefined: an unset optional value (a site pressure not given) is shown as null. */
function jsonValue(value: unknown): unknown {
  return JSON.parse(JSON.stringify(value, (_key, inner: unknown) => (inner === undefined ? null : inner))) as unknown;
}

/** A warning without the server's file path, which says nothing to a reader and something to an attacker. */
function warningView(problem: LoadProblem): Record<string, unknown> {
  return Object.fromEntries(
    Object.entries({
      path: problem.path,
      message: problem.message,
      fix: problem.fix,
      line: problem.line,
      column: problem.column,
    }).filter(([, value]) => value !== undefined),
  );
}

/** `effectiveFrom` once the policy format has it; absent before. */
function effectiveFromOf(snapshot: PolicySnapshot): Record<string, unknown> {
  const effectiveFrom = (snapshot.policy as { readonly effectiveFrom?: unknown }).effectiveFrom;
  return effectiveFrom === undefined || effectiveFrom === null ? {} : { effectiveFrom: jsonValue(effectiveFrom) };
}

/** The body of `GET /policy` for one snapshot. */
export function policyView(snapshot: PolicySnapshot): Record<string, unknown> {
  const { policy } = snapshot;
  return {
    id: policy.id,
    version: policy.version,
    title: policy.title,
    ...effectiveFromOf(snapshot),
    contentHash: snapshot.contentHash,
    contentHashAlgorithm: 'sha256',
    loadedAt: snapshot.loadedAt,
    acknowledgements: jsonValue(snapshot.acknowledgements),
    warnings: snapshot.warnings.map(warningView),
    effective: jsonValue(policy),
  };
}

export function policyHandler(deps: PolicyRouteDeps): RouteHandler {
  return (req, res) => {
    const state = requestState(res);
    const decision = decideReviewAccess(
      deps.access,
      { peerAddress: req.socket.remoteAddress, rawHeaders: req.rawHeaders },
      deps.clock().getTime(),
    );
    if (decision.kind === 'denied') {
      state.detail = { kind: 'review', refused: decision.reason };
      throw new AppError('CDS_ERR_POLICY_ACCESS_DENIED');
    }
    return {
      status: 200,
      headers: { 'Cache-Control': 'no-store' },
      body: policyView(pinnedPolicy(res)),
      detail: { kind: 'review', via: decision.via, reviewer: decision.reviewer },
    };
  };
}
