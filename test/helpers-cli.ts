/** Runs the real CLI (`node bin/fleetwright.js ...`) from the repository root, as a user would. */
import { spawnSync } from 'node:child_process';
import path from 'node:path';

export const repositoryRoot = path.resolve(import.meta.dirname, '..');

export interface CliResult {
  status: number | null;
  stdout: string;
  stderr: string;
}

export function fleetwright(...args: string[]): CliResult {
  const env = { ...process.env };
  delete env.FLEETWRIGHT_DEBUG;
  const result = spawnSync(process.execPath, ['bin/fleetwright.js', ...args], { cwd: repositoryRoot, encoding: 'utf8', env, timeout: 120_000 });
  if (result.error) throw result.error;
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}
