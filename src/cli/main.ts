#!/usr/bin/env node
import { readFileSync } from 'node:fs';
import { runCli } from './run-cli.js';

const code = await runCli(process.argv.slice(2), {
  stdout: (text) => process.stdout.write(text),
  stderr: (text) => process.stderr.write(text),
  readFile: (path) => readFileSync(path, 'utf8'),
  now: () => new Date(),
  stderrIsTerminal: process.stderr.isTTY,
  env: process.env,
  cwd: process.cwd(),
});
process.exitCode = code;
