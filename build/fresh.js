/**
 * Which code to run: the compiled build (build/build.js) when it exists and every source
 * file that went into it is unchanged, else null (the caller then registers tsx and imports
 * the TypeScript sources). "Unchanged" is the size and modification time the build recorded
 * from the open file as it read it, compared exactly: an edit, a `git checkout`, a deleted
 * file or an edited build script all make the build stale, so a developer never runs old
 * code. The check costs one stat per source file (a few milliseconds).
 *
 * FLEETWRIGHT_BUILD=off always runs the sources through tsx (the tests do); =explain also
 * says on stderr why the build was or was not used.
 */
import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const repositoryRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const manifestVersion = 1;

/**
 * Why the build in `<root>/dist` cannot be used for `entry`, or null when it can.
 * @param {string} entry
 * @param {string} root
 * @returns {{ file: string, reason: null } | { file: null, reason: string }}
 */
export function checkBuild(entry, root = repositoryRoot) {
  const outRoot = path.join(root, 'dist');
  let manifest;
  try {
    manifest = JSON.parse(readFileSync(path.join(outRoot, 'current.json'), 'utf8'));
  } catch {
    return { file: null, reason: 'no build (run npm run build)' };
  }
  if (manifest?.version !== manifestVersion || typeof manifest.inputs !== 'object' || typeof manifest.entries?.[entry] !== 'string') {
    return { file: null, reason: `the build in dist/ has no ${entry} entry of this format (run npm run build)` };
  }
  for (const [file, recorded] of Object.entries(manifest.inputs)) {
    let stats;
    try {
      stats = statSync(path.join(root, file));
    } catch {
      return { file: null, reason: `${file} is gone since the build` };
    }
    if (stats.size !== recorded.size || stats.mtimeMs !== recorded.mtimeMs) return { file: null, reason: `${file} changed since the build` };
  }
  const file = path.join(outRoot, manifest.folder, manifest.entries[entry]);
  try {
    statSync(file);
  } catch {
    return { file: null, reason: `dist/${manifest.folder}/${manifest.entries[entry]} is missing` };
  }
  return { file, reason: null };
}

/**
 * The URL to import for `entry` ('cli', 'bench', ...), or null to run the sources through tsx.
 * @param {string} entry
 * @returns {string | null}
 */
export function builtEntry(entry) {
  const mode = process.env.FLEETWRIGHT_BUILD;
  if (mode === 'off') return null;
  const { file, reason } = checkBuild(entry);
  if (mode === 'explain') process.stderr.write(file ? `fleetwright: running the build ${path.relative(repositoryRoot, file)}\n` : `fleetwright: running the sources through tsx: ${reason}\n`);
  return file ? pathToFileURL(file).href : null;
}
