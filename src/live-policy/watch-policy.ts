import { watch as fsWatch, type FSWatcher } from 'node:fs';
import { basename, dirname } from 'node:path';
import type { FilePaths } from '../config/load-files.js';
import type { Logger } from '../log/logger.js';

/**
 * Reload on file change (`OXYGEN_CHECKER_POLICY_WATCH=true`). The policy file's folder is watched,
 * not the file: editors and deployment tools often save by writing a new file and renaming it over
 * the old one, after which a watch on the old file sees nothing more. The cards folder is watched
 * too. Changes come in bursts (write, rename, attribute change), so a reload runs once the folder
 * has been quiet for `debounceMs`.
 */

/** Quiet time before a burst of changes counts as one save (common practice: a few hundred ms). */
export const WATCH_DEBOUNCE_MS = 300;

export type WatchFolder = (
  folder: string,
  onEvent: (filename: string | null) => void,
  onError: (error: unknown) => void,
) => { close(): void };

/** fs.watch on a folder; `filename` may be null where the platform does not report it. */
export const watchFolderWithFs: WatchFolder = (folder, onEvent, onError) => {
  const watcher: FSWatcher = fsWatch(folder, { persistent: false }, (_event, filename) => {
    onEvent(filename === null ? null : String(filename));
  });
  watcher.on('error', onError);
  return watcher;
};

export interface PolicyWatchDeps {
  readonly paths: FilePaths;
  readonly onChange: () => void;
  readonly logger: Logger;
  readonly debounceMs?: number;
  readonly watchFolder?: WatchFolder;
}

export interface PolicyWatch {
  close(): void;
}

export function watchPolicyFiles(deps: PolicyWatchDeps): PolicyWatch {
  const watchFolder = deps.watchFolder ?? watchFolderWithFs;
  const debounceMs = deps.debounceMs ?? WATCH_DEBOUNCE_MS;
  const policyFolder = dirname(deps.paths.policyPath);
  const policyName = basename(deps.paths.policyPath);
  let timer: NodeJS.Timeout | undefined;
  const changed = (): void => {
    if (timer !== undefined) {
      clearTimeout(timer);
    }
    timer = setTimeout(() => {
      timer = undefined;
      deps.onChange();
    }, debounceMs);
    timer.unref();
  };
  const failed = (folder: string) => (error: unknown): void => {
    const code = (error as { code?: unknown } | null)?.code;
    deps.logger.warn(
      { policyWatch: 'error', folder, ...(typeof code === 'string' ? { errorCode: code } : {}) },
      'policy file watch failed; SIGHUP still reloads',
    );
  };
  const sameFolder = deps.paths.cardsDir === policyFolder;
  const watchers: { close(): void }[] = [];
  const start = (folder: string, onEvent: (name: string | null) => void): void => {
    try {
      watchers.push(watchFolder(folder, onEvent, failed(folder)));
    } catch (error) {
      failed(folder)(error);
    }
  };
  // Other files in the policy's folder (backups, other sites' files) do not trigger a reload.
  start(policyFolder, (name) => (sameFolder || name === null || name === policyName ? changed() : undefined));
  if (!sameFolder) {
    start(deps.paths.cardsDir, () => changed());
  }
  return {
    close() {
      if (timer !== undefined) {
        clearTimeout(timer);
        timer = undefined;
      }
      for (const watcher of watchers) {
        watcher.close();
      }
    },
  };
}
