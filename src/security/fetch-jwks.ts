import { readJwkSet, type KeySet } from './jwk-keys.js';
import { readCappedBody } from '../net/read-capped-body.js';

/**
 * One bounded GET of a JWK Set: a short timeout, a size cap, no redirects (a 3xx could point
 * anywhere, and the URL was allowlisted, not where it leads), https only unless told otherwise. No
 * credentials are sent. Failures are reported by kind, never with the body.
 */
export type JwksFetchFailure =
  | 'invalid-url'
  | 'not-https'
  | 'timeout'
  | 'network'
  | 'redirect'
  | 'http-status'
  | 'too-large'
  | 'invalid-json'
  | 'not-jwks';

export type JwksFetchOutcome =
  | { readonly kind: 'ok'; readonly keys: KeySet; readonly skipped: number }
  | { readonly kind: 'failed'; readonly failure: JwksFetchFailure };

export interface JwksFetchOptions {
  readonly fetch: typeof fetch;
  readonly timeoutMs: number;
  readonly maxBytes: number;
  /** False only for tests against loopback servers; production always requires https. */
  readonly requireHttps: boolean;
}

function failed(failure: JwksFetchFailure): JwksFetchOutcome {
  return { kind: 'failed', failure };
}

export async function fetchJwks(url: string, options: JwksFetchOptions): Promise<JwksFetchOutcome> {
  let target: URL;
  try {
    target = new URL(url);
  } catch {
    return failed('invalid-url');
  }
  if (target.username !== '' || target.password !== '') {
    return failed('invalid-url');
  }
  if (target.protocol !== 'https:' && (options.requireHttps || target.protocol !== 'http:')) {
    return failed('not-https');
  }
  const signal = AbortSignal.timeout(options.timeoutMs);
  let response: Response;
  try {
    response = await options.fetch(target, {
      method: 'GET',
      headers: { Accept: 'application/jwk-set+json, application/json' },
      redirect: 'manual',
      signal,
    });
  } catch (error) {
    const name = error instanceof Error ? error.name : '';
    return failed(name === 'TimeoutError' || name === 'AbortError' ? 'timeout' : 'network');
  }
  try {
    if (response.type === 'opaqueredirect' || (response.status >= 300 && response.status < 400)) {
      await response.body?.cancel();
      return failed('redirect');
    }
    if (response.status !== 200) {
      await response.body?.cancel();
      return failed('http-status');
    }
    const text = await readCappedBody(response, options.maxBytes);
    if (text === undefined) {
      return failed('too-large');
    }
    let json: unknown;
    try {
      json = JSON.parse(text);
    } catch {
      return failed('invalid-json');
    }
    const set = readJwkSet(json);
    return set === undefined ? failed('not-jwks') : { kind: 'ok', keys: set.keys, skipped: set.skipped };
  } catch (error) {
    const name = error instanceof Error ? error.name : '';
    return failed(name === 'TimeoutError' || name === 'AbortError' ? 'timeout' : 'network');
  }
}
