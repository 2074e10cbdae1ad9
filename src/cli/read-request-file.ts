import { describeBreach, describeBreachPath, findJsonLimitBreach } from '../http/json-limits.js';
import type { CliIo } from './cli-io.js';

export type RequestFileRead =
  | { readonly kind: 'ok'; readonly body: unknown }
  | { readonly kind: 'unreadable'; readonly message: string };

/**
 * Reads a saved hook request with the same structural limits the service applies to a request body,
 * so the offline commands never recurse into a file the service would have refused.
 */
export function readRequestFile(file: string, io: CliIo): RequestFileRead {
  let body: unknown;
  try {
    body = JSON.parse(io.readFile(file));
  } catch (error) {
    return {
      kind: 'unreadable',
      message: `cannot read ${file} as JSON${error instanceof SyntaxError ? `: ${error.message}` : ''}`,
    };
  }
  const breach = findJsonLimitBreach(body);
  if (breach !== undefined) {
    return {
      kind: 'unreadable',
      message: `${file}: ${describeBreachPath(breach.path)} ${describeBreach(breach.kind)} (the service would answer 400)`,
    };
  }
  return { kind: 'ok', body };
}
