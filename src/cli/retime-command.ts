import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { parseOptions } from './parse-options.js';
import { readRequestFile } from './read-request-file.js';
import { requestMoment, retimeRequest } from './retime-request.js';

export const RETIME_USAGE = `Usage: oxygen-order-checker retime REQUEST.json [--at TIME]

Prints the request with every FHIR date-time moved by the same amount, so that its draft orders are
signed now (or at --at). Dates without a time, such as birthDate, stay as they are. Use it to send a
saved example to the running service:
  oxygen-order-checker retime examples/order-sign-copd-acidosis-venturi.json | curl -s -H 'Content-Type: application/json' \\
    --data-binary @- http://127.0.0.1:8080/cds-services/oxygen-order-sign`;

export function runRetimeCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, { at: { type: 'string' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${RETIME_USAGE}\n`);
    return 0;
  }
  const [file, ...extra] = parsed.positionals;
  if (file === undefined || extra.length > 0) {
    throw new UsageError('give exactly one REQUEST.json');
  }
  const atText = parsed.values['at'];
  if (typeof atText === 'string' && !(/^\d{4}-\d{2}-\d{2}T/.test(atText) && Number.isFinite(Date.parse(atText)))) {
    throw new UsageError('--at: must be an ISO 8601 date-time');
  }
  const read = readRequestFile(file, io);
  if (read.kind === 'unreadable') {
    io.stderr(`oxygen-order-checker retime: ${read.message}\n`);
    return 1;
  }
  const body = read.body;
  const from = requestMoment(body);
  if (from === undefined) {
    io.stderr('oxygen-order-checker retime: the request has no draft order with an authoredOn date-time to move from\n');
    return 1;
  }
  const to = typeof atText === 'string' ? new Date(atText) : io.now();
  io.stdout(`${JSON.stringify(retimeRequest(body, from, to), null, 2)}\n`);
  return 0;
}
