import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { watchPolicyFiles, WATCH_DEBOUNCE_MS, type WatchFolder } from '../../src/live-policy/watch-policy.js';
import { createLogger } from '../../src/log/logger.js';
import { createMemoryLog } from '../log/memory-log.js';

/**
 * The file watcher, with the folder watch and the clock both under the test's control (vitest's fake
 * timers): which changes count, and how a burst of them becomes one reload.
 */

const PATHS = { policyPath: '/etc/larkspur-bay/policy/larkspur-bay.yaml', cardsDir: '/etc/larkspur-bay/cards' };

interface FakeFolders {
  readonly watch: WatchFolder;
  emit(folder: string, filename: string | null): void;
  fail(folder: string, error: unknown): void;
  readonly closed: string[];
}

function fakeFolders(): FakeFolders {
  const listeners = new Map<string, { onEvent: (name: string | null) => void; onError: (error: unknown) => void }>();
  const closed: string[] = [];
  return {
    watch: (folder, onEvent, onError) => {
      listeners.set(folder, { onEvent, onError });
      return { close: () => closed.push(folder) };
    },
    emit: (folder, filename) => listeners.get(folder)?.onEvent(filename),
    fail: (folder, error) => listeners.get(folder)?.onError(error),
    closed,
  };
}

beforeEach(() => {
  vi.useFakeTimers();
});

afterEach(() => {
  vi.useRealTimers();
});

function start(folders: FakeFolders, paths = PATHS) {
  const log = createMemoryLog();
  let changes = 0;
  const watch = watchPolicyFiles({
    paths,
    onChange: () => {
      changes += 1;
    },
    logger: createLogger({ level: 'info', destination: log.stream }),
    watchFolder: folders.watch,
  });
  return { watch, log, changes: () => changes };
}

describe('watching the policy files', () => {
  it('turns one save (write a temporary file, rename it over the policy) into one reload once quiet', () => {
    const folders = fakeFolders();
    const { changes } = start(folders);
    folders.emit('/etc/larkspur-bay/policy', '.larkspur-bay.yaml.swp');
    folders.emit('/etc/larkspur-bay/policy', 'larkspur-bay.yaml');
    folders.emit('/etc/larkspur-bay/policy', 'larkspur-bay.yaml');
    vi.advanceTimersByTime(WATCH_DEBOUNCE_MS - 1);
    expect(changes()).toBe(0);
    folders.emit('/etc/larkspur-bay/policy', 'larkspur-bay.yaml');
    vi.advanceTimersByTime(WATCH_DEBOUNCE_MS);
    expect(changes()).toBe(1);
  });

  it('reloads for a change in the cards folder', () => {
    const folders = fakeFolders();
    const { changes } = start(folders);
    folders.emit('/etc/larkspur-bay/cards', 'spo2-below-target.yaml');
    vi.advanceTimersByTime(WATCH_DEBOUNCE_MS);
    expect(changes()).toBe(1);
  });

  it('reloads when the platform does not name the file that changed', () => {
    const folders = fakeFolders();
    const { changes } = start(folders);
    folders.emit('/etc/larkspur-bay/policy', null);
    vi.advanceTimersByTime(WATCH_DEBOUNCE_MS);
    expect(changes()).toBe(1);
  });

  describe('edge cases', () => {
    it('ignores other files in the policy folder', () => {
      const folders = fakeFolders();
      const { changes } = start(folders);
      folders.emit('/etc/larkspur-bay/policy', 'larkspur-bay.yaml.bak');
      folders.emit('/etc/larkspur-bay/policy', 'harbour-ward-draft.yaml');
      vi.advanceTimersByTime(WATCH_DEBOUNCE_MS * 10);
      expect(changes()).toBe(0);
    });

    it('reloads for any change when the cards live in the policy folder', () => {
      const folders = fakeFolders();
      const { changes } = start(folders, { policyPath: '/etc/larkspur-bay/larkspur-bay.yaml', cardsDir: '/etc/larkspur-bay' });
      folders.emit('/etc/larkspur-bay', 'spo2-below-target.yaml');
      vi.advanceTimersByTime(WATCH_DEBOUNCE_MS);
      expect(changes()).toBe(1);
    });

    it('logs a failed watch without its message and keeps going', () => {
      const folders = fakeFolders();
      const { log, changes } = start(folders);
      folders.fail('/etc/larkspur-bay/cards', Object.assign(new Error('secret detail'), { code: 'EACCES' }));
      expect(log.lines()).toMatchObject([{ level: 40, policyWatch: 'error', folder: '/etc/larkspur-bay/cards', errorCode: 'EACCES' }]);
      expect(log.text()).not.toContain('secret detail');
      folders.emit('/etc/larkspur-bay/policy', 'larkspur-bay.yaml');
      vi.advanceTimersByTime(WATCH_DEBOUNCE_MS);
      expect(changes()).toBe(1);
    });

    it('starts without a folder it cannot watch, and says so', () => {
      const { log } = start({
        ...fakeFolders(),
        watch: () => {
          throw Object.assign(new Error('gone'), { code: 'ENOENT' });
        },
      });
      expect(log.lines().map((line) => line['errorCode'])).toStrictEqual(['ENOENT', 'ENOENT']);
    });

    it('stops watching, and drops a reload still waiting, when closed', () => {
      const folders = fakeFolders();
      const { watch, changes } = start(folders);
      folders.emit('/etc/larkspur-bay/policy', 'larkspur-bay.yaml');
      watch.close();
      vi.advanceTimersByTime(WATCH_DEBOUNCE_MS);
      expect(changes()).toBe(0);
      expect(folders.closed.sort()).toStrictEqual(['/etc/larkspur-bay/cards', '/etc/larkspur-bay/policy']);
    });
  });
});
