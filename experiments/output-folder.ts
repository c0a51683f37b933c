/**
 * All-or-nothing result folders. Every file of a result set is written first into a staging
 * folder inside the target folder (same file system, so renames are atomic), flushed to
 * disk; only then are the files swapped in. Before the swap every target is checked (a
 * folder where a file should go is refused), and old files are kept aside (hard links)
 * until all new ones are in, so a failure half-way puts them back: after any failure the folder holds
 * exactly what it held before, and the message names the path that failed.
 */
import { closeSync, copyFileSync, fsyncSync, linkSync, lstatSync, mkdirSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import path from 'node:path';
import { InputError } from '../sim/errors.ts';

export interface OutputFile {
  /** File name inside the folder (no subfolders). */
  name: string;
  /** The text, or a writer that streams it in pieces (large files: memory stays bounded). */
  content: string | ((write: (text: string) => void) => void);
}

let stagingCount = 0;

function reason(error: unknown): string {
  return (error as NodeJS.ErrnoException).code ?? (error instanceof Error ? error.message : String(error));
}

/** Creates the folder (and parents) or throws InputError naming it. */
export function ensureOutputFolder(directory: string, option = '--out'): void {
  try {
    mkdirSync(directory, { recursive: true });
  } catch (error) {
    throw new InputError(`${option}: cannot create folder ${JSON.stringify(directory)} (${reason(error)}), expected a writable folder path`);
  }
}

/**
 * Checks, before any work is done, that the folder can be created and that none of the
 * named files is in the way (a folder or another non-file where a result file goes).
 */
export function checkOutputFolder(directory: string, names: readonly string[], option = '--out'): void {
  ensureOutputFolder(directory, option);
  for (const name of names) {
    const target = path.join(directory, name);
    let stats;
    try {
      stats = lstatSync(target);
    } catch {
      continue; // absent: will be created
    }
    if (!stats.isFile()) {
      throw new InputError(`${option}: ${JSON.stringify(target)} is ${stats.isDirectory() ? 'a folder' : 'not a regular file'}, expected a file path fleetwright may replace (nothing was written)`);
    }
  }
}

/** Writes a file and flushes it to disk. */
export function writeDurable(file: string, content: OutputFile['content']): void {
  const fd = openSync(file, 'w');
  try {
    if (typeof content === 'string') writeSync(fd, content);
    else content((text) => void writeSync(fd, text));
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

function syncFolder(directory: string): void {
  try {
    const fd = openSync(directory, 'r');
    try {
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
  } catch {
    // Some file systems do not let a folder be flushed; the renames are still atomic.
  }
}

/**
 * Writes every file or none (see the header); throws InputError naming the failed path.
 * `stale` names files an earlier result set may have left that this one does not produce
 * (for example hourly.csv of a run with a demand profile, rerun without one): they are
 * removed in the same swap, so the folder never mixes two runs' files.
 */
export function writeOutputFolder(directory: string, files: readonly OutputFile[], option = '--out', stale: readonly string[] = []): void {
  checkOutputFolder(
    directory,
    files.map((f) => f.name),
    option,
  );
  const staging = path.join(directory, `.fleetwright-tmp-${process.pid}-${++stagingCount}`);
  try {
    mkdirSync(staging);
  } catch (error) {
    throw new InputError(`${option}: cannot write into ${JSON.stringify(directory)} (${reason(error)}), expected a writable folder (nothing was written)`);
  }
  try {
    for (const file of files) {
      const staged = path.join(staging, file.name);
      try {
        writeDurable(staged, file.content);
      } catch (error) {
        throw new InputError(`${option}: cannot write ${JSON.stringify(path.join(directory, file.name))} (${reason(error)}) (nothing was written)`);
      }
    }
    // Swap: move each old file aside, then the new one in; on failure undo in reverse order.
    const undo: (() => void)[] = [];
    try {
      for (const file of files) {
        const target = path.join(directory, file.name);
        const backup = path.join(staging, `${file.name}.previous`);
        // The old file is kept as a hard link (or a copy) and the new one renamed over it,
        // so the target path never goes missing, even if the process is killed here.
        let existed = true;
        try {
          try {
            linkSync(target, backup);
          } catch (error) {
            if ((error as NodeJS.ErrnoException).code === 'ENOENT') throw error;
            copyFileSync(target, backup);
          }
        } catch (error) {
          if ((error as NodeJS.ErrnoException).code !== 'ENOENT') throw Object.assign(new Error(target), { cause: error, target });
          existed = false;
        }
        try {
          renameSync(path.join(staging, file.name), target);
        } catch (error) {
          throw Object.assign(new Error(target), { cause: error, target });
        }
        undo.push(existed ? () => renameSync(backup, target) : () => rmSync(target, { force: true }));
      }
      const produced = new Set(files.map((f) => f.name));
      for (const name of stale) {
        if (produced.has(name)) continue;
        const target = path.join(directory, name);
        try {
          if (!lstatSync(target).isFile()) continue;
        } catch {
          continue; // absent
        }
        const backup = path.join(staging, `${name}.previous`);
        try {
          renameSync(target, backup);
        } catch (error) {
          throw Object.assign(new Error(target), { cause: error, target });
        }
        undo.push(() => renameSync(backup, target));
      }
    } catch (error) {
      for (const step of undo.reverse()) {
        try {
          step();
        } catch {
          // Best effort: keep undoing the rest.
        }
      }
      const target = (error as { target?: string }).target ?? directory;
      throw new InputError(`${option}: cannot replace ${JSON.stringify(target)} (${reason((error as { cause?: unknown }).cause ?? error)}); the folder was left as it was`);
    }
    syncFolder(directory);
  } finally {
    rmSync(staging, { recursive: true, force: true });
  }
}
