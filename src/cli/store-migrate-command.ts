import { isAbsolute, resolve } from 'node:path';
import { EnvSchema, formatEnvProblems } from '../config/env-config.js';
import { readSecretValueFiles } from '../config/secret-variables.js';
import { openConfiguredStore } from '../store/open-store.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { parseOptions } from './parse-options.js';

export const STORE_MIGRATE_USAGE = `Usage: oxygen-order-checker store migrate

Brings the store the environment names up to this version's schema, then exits: the PostgreSQL
database of DATABASE_URL (or DATABASE_URL_FILE), else the SQLite store in OXYGEN_CHECKER_DATA_DIR.
The service runs the same migrations at start, and several instances may start at once (one
migrates, the others wait); this command lets a deployment migrate once, before rolling out a new
version (docs/deployment.md, "Upgrading"). A store whose schema is newer than this version is
refused, and nothing is changed. Exit 0 when the store is current, 2 when the settings are wrong or
the store cannot be opened.`;

/** Only the store's own settings are read: a migration job needs no policy, trust file or keys. */
const StoreSettingsSchema = EnvSchema.pick({ DATABASE_URL: true, OXYGEN_CHECKER_DATA_DIR: true });

export async function runStoreMigrateCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, {});
  if (parsed.values['help'] === true) {
    io.stdout(`${STORE_MIGRATE_USAGE}\n`);
    return 0;
  }
  if (parsed.positionals.length > 0) {
    throw new UsageError(`takes no argument (got '${parsed.positionals[0] ?? ''}'); the store is named by DATABASE_URL or OXYGEN_CHECKER_DATA_DIR`);
  }
  const secretValues = readSecretValueFiles(io.env ?? {}, io.cwd ?? '.');
  if (secretValues.kind === 'invalid') {
    io.stderr(`oxygen-order-checker store migrate: ${formatEnvProblems(secretValues.problems)}\n`);
    return 2;
  }
  const settings = StoreSettingsSchema.safeParse(secretValues.env);
  if (!settings.success) {
    // Messages name the variable and the rule, never the value: a URL may carry a password.
    const problems = settings.error.issues.map((issue) => `${issue.path.join('.')}: ${issue.message}`);
    io.stderr(`oxygen-order-checker store migrate: ${problems.join('\n')}\n`);
    return 2;
  }
  const { DATABASE_URL: databaseUrl, OXYGEN_CHECKER_DATA_DIR: dataDir } = settings.data;
  const opened = await openConfiguredStore({
    dataDir: isAbsolute(dataDir) ? dataDir : resolve(io.cwd ?? '.', dataDir),
    ...(databaseUrl === '' ? {} : { databaseUrl }),
  });
  if (opened.kind === 'refused') {
    io.stderr(`oxygen-order-checker store migrate: ${opened.variable}: ${opened.problem}\n`);
    return 2;
  }
  await opened.store.close();
  io.stdout(`the store at ${opened.where} is at this version's schema\n`);
  return 0;
}
