import { writeFileSync } from 'node:fs';

/**
 * What a CLI command gets from the shell and gives back: arguments in, text out, an exit code.
 * Commands never touch process.* themselves, so tests drive them with captured output.
 */
export interface CliIo {
  readonly stdout: (text: string) => void;
  readonly stderr: (text: string) => void;
  readonly readFile: (path: string) => string;
  readonly now: () => Date;
  /** Whether stderr is a terminal (a progress bar is drawn there only then); absent means no. */
  readonly stderrIsTerminal?: boolean;
  /** The environment and working directory, for the commands that act on the service's own store. */
  readonly env?: Readonly<Record<string, string | undefined>>;
  readonly cwd?: string;
}

/** 0: ran (whatever it found); 1: input could not be read or evaluated; 2: usage or configuration error. */
export type ExitCode = 0 | 1 | 2;

export class UsageError extends Error {
  override readonly name = 'UsageError';
}

/**
 * Writes a command's output file; when it cannot, says so on stderr with the system's error code
 * (never the text) and answers false, so the command can exit 1.
 */
export function writeOutputFile(io: CliIo, command: string, file: string, text: string): boolean {
  try {
    writeFileSync(file, text);
    return true;
  } catch (error) {
    const code = (error as { code?: unknown } | null)?.code;
    io.stderr(`oxygen-order-checker ${command}: cannot write ${file}${typeof code === 'string' ? ` (${code})` : ''}\n`);
    return false;
  }
}
