import { describe, expect, it } from 'vitest';
import { createRefusalLimiter, type RefusalDecision } from '../../src/log/refusal-limiter.js';

const LIMITS = { maxLinesPerWindow: 3, windowMs: 60_000, maxClients: 4 };

function run(times: number, decide: () => RefusalDecision): RefusalDecision[] {
  return Array.from({ length: times }, decide);
}

describe('createRefusalLimiter', () => {
  it('logs the first N refusals of a client and reason in a window, then counts the rest', () => {
    const limiter = createRefusalLimiter(LIMITS);
    const decisions = run(10, () => limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000));
    expect(decisions.filter((d) => d.kind === 'log')).toHaveLength(3);
    expect(decisions.slice(3).every((d) => d.kind === 'suppress')).toBe(true);
  });

  it('reports how many were not logged with the first refusal of the next window', () => {
    const limiter = createRefusalLimiter(LIMITS);
    run(10, () => limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000));
    expect(limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 61_000)).toStrictEqual({ kind: 'log', suppressedBefore: 7 });
    // The count is reported once, then the new window starts afresh.
    expect(limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 61_001)).toStrictEqual({ kind: 'log', suppressedBefore: 0 });
  });

  it('keeps clients and reasons apart: one noisy client does not silence another', () => {
    const limiter = createRefusalLimiter(LIMITS);
    run(10, () => limiter.decide('10.0.0.7', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000));
    expect(limiter.decide('10.0.0.8', 'CDS_ERR_AUTH_INVALID_TOKEN', 1_000).kind).toBe('log');
    expect(limiter.decide('10.0.0.7', 'CDS_ERR_REQUEST_INVALID', 1_000).kind).toBe('log');
  });

  it('holds at most maxClients entries, reusing ended windows and sharing one entry past that', () => {
    const limiter = createRefusalLimiter(LIMITS);
    for (let i = 0; i < 50; i += 1) limiter.decide(`10.0.1.${i}`, 'CDS_ERR_NOT_FOUND', 1_000);
    expect(limiter.size()).toBeLessThanOrEqual(LIMITS.maxClients + 1);
    // The clients past the table share one entry, so together they log at most N lines a window.
    let fresh = 0;
    const overflow = run(10, () => limiter.decide(`10.0.3.${++fresh}`, 'CDS_ERR_NOT_FOUND', 1_500));
    expect(overflow.filter((d) => d.kind === 'log').length).toBeLessThanOrEqual(LIMITS.maxLinesPerWindow);
    // Once the windows end, new clients get their own entries again.
    expect(limiter.decide('10.0.2.1', 'CDS_ERR_NOT_FOUND', 200_000)).toStrictEqual({ kind: 'log', suppressedBefore: 0 });
    expect(limiter.size()).toBeLessThanOrEqual(LIMITS.maxClients + 1);
  });
});
