import { describeBreach, describeBreachPath, findJsonLimitBreach } from '../http/json-limits.js';
import { findJsonSyntaxError } from '../text/json-syntax-error.js';
import type { CliIo } from './cli-io.js';

export type RequestFileRead =
  | { readonly kind: 'ok'; readonly body: unknown }
  | { readonly kind: 'unreadable'; readonly message: string };

/**
 * Reads a saved hook request with the same structural limits the service applies to a request body,
 * so the offline commands never recurse into a file the service would have refused. A syntax error
 * is reported by line and column, never with JSON.parse's message, which quotes the file's text.
 */
export function readRequestFile(file: string, io: CliIo): RequestFileRead {
  let text: string;
  try {
    text = io.readFile(file);
  } catch (error) {
    const code = (error as { code?: unknown } | null)?.code;
    return { kind: 'unreadable', message: `cannot read ${file}${typeof code === 'string' ? ` (${code})` : ''}` };
  }
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    const fault = findJsonSyntaxError(text);
    return {
      kind: 'unreadable',
      message:
        fault === undefined
          ? `cannot read ${file} as JSON`
          : `${file}:${fault.line}:${fault.column}: not valid JSON: expected ${fault.expected}`,
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
