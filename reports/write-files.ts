/**
 * Writes result files so that nothing already there is lost or half-written: each file is
 * written to a temporary name in the same folder, flushed, then renamed over the target
 * (rename is atomic on one file system).
 */
import { mkdirSync, openSync, writeSync, fsyncSync, closeSync, renameSync, rmSync } from 'node:fs';
import path from 'node:path';
import { InputError } from '../sim/errors.ts';

export function ensureDirectory(directory: string, option = '--out'): void {
  try {
    mkdirSync(directory, { recursive: true });
  } catch (error) {
    throw new InputError(`${option}: cannot create folder ${JSON.stringify(directory)} (${(error as NodeJS.ErrnoException).code ?? error}), expected a writable folder path`);
  }
}

export function writeFileAtomic(file: string, content: string | Uint8Array): void {
  const temporary = path.join(path.dirname(file), `.${path.basename(file)}.${process.pid}.tmp`);
  const fd = openSync(temporary, 'w');
  try {
    if (typeof content === 'string') writeSync(fd, content);
    else writeSync(fd, content);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
  try {
    renameSync(temporary, file);
  } catch (error) {
    rmSync(temporary, { force: true });
    throw error;
  }
}
