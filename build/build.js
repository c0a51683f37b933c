#!/usr/bin/env node
/**
 * `npm run build` (also run by `npm ci` / `npm install` through the `prepare` script):
 * compiles the TypeScript sources to plain JavaScript with esbuild, so the CLI, its worker
 * threads and the benchmarks run without the tsx loader (which transforms each file at
 * start-up and reaches imported bindings through getter calls). The sources stay the truth:
 * `build/fresh.js` uses a build only while every file that went into it is unchanged, and
 * falls back to tsx otherwise (DEVELOPERS.md, "The build").
 *
 * Layout:
 *   dist/<hash>/cli.js, replication-worker.js, bench.js and their shared chunks
 *       (esbuild code splitting, so a command's lazy imports stay lazy). <hash> is a hash of
 *       the output, so a running process keeps reading its own build while a new one is
 *       written beside it.
 *   dist/current.json  which folder is current, and the size and modification time of every
 *       source file read into it (taken from the open file as it was read). Written last,
 *       atomically: a half-written build is never current.
 *
 * Each module keeps its own location: `import.meta.url`, `.dirname` and `.filename` in a
 * source file are rewritten to that file's place in the repository (computed relative to the
 * bundle, so the checkout can move), so paths read from them (package.json, the replay
 * viewer's source, a benchmark's own file) resolve as they do under tsx. A file containing
 * the marker `build: bundle location` keeps the bundle's own location instead (the worker
 * pool, which starts the compiled worker that sits beside the bundle).
 *
 *   node build/build.js [--quiet] [--soft] [--root DIR]
 *     --soft   on failure, warn and exit 0 (prepare: the CLI then runs through tsx)
 */
import { createHash } from 'node:crypto';
import { closeSync, fstatSync, mkdirSync, openSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

/** The programs built, by the name `build/fresh.js` asks for. */
export const entries = {
  cli: 'cli/main.ts',
  'replication-worker': 'experiments/replication-worker.ts',
  bench: 'bench/run.ts',
};

/** Files that shape the output without being imported: a change to one makes the build stale. */
const configFiles = ['tsconfig.json', 'build/build.js'];

export const manifestName = 'current.json';
export const manifestVersion = 1;
const bundleLocationMarker = 'build: bundle location';

const defaultRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

/** A file's identity for the staleness check: its size and modification time (ms, as Node reports it). */
function identity(stats) {
  return { size: stats.size, mtimeMs: stats.mtimeMs };
}

/** Reads a file and its identity from the same open descriptor. */
function readWithIdentity(file) {
  const fd = openSync(file, 'r');
  try {
    const stats = fstatSync(fd);
    const text = readFileSync(fd, 'utf8');
    return { text, identity: identity(stats) };
  } finally {
    closeSync(fd);
  }
}

/**
 * `import.meta.url` / `.dirname` / `.filename` of `file` as expressions evaluated in a bundle
 * that lives in `outdir`: the bundle's own URL plus the relative path to the source file.
 */
function locationRewrite(text, file, outdir) {
  const relative = path.relative(outdir, file).split(path.sep).join('/');
  const url = `new URL(${JSON.stringify(relative)}, import.meta.url).href`;
  let needsPath = false;
  const out = text.replace(/\bimport\.meta\.(url|dirname|filename)\b/g, (_, field) => {
    if (field === 'url') return `(${url})`;
    needsPath = true;
    return field === 'filename' ? `__fleetwrightSourceFile(${url})` : `__fleetwrightSourceDir(${url})`;
  });
  if (!needsPath) return out;
  // Appended (function declarations are hoisted), so line numbers stay those of the source.
  return `${out}\nimport { fileURLToPath as __fleetwrightToPath } from 'node:url';\nimport { dirname as __fleetwrightDirname } from 'node:path';\nfunction __fleetwrightSourceFile(url: string): string { return __fleetwrightToPath(url); }\nfunction __fleetwrightSourceDir(url: string): string { return __fleetwrightDirname(__fleetwrightToPath(url)); }\n`;
}

/**
 * Builds into `<root>/dist/<hash>/` and makes it current. Returns the manifest written.
 * `outRoot` defaults to `<root>/dist`.
 */
export async function build({ root = defaultRoot, outRoot = path.join(root, 'dist'), quiet = false } = {}) {
  const esbuild = await import('esbuild');
  mkdirSync(outRoot, { recursive: true });
  // The bundle's folder is known before its hash: every output sits one level below outRoot,
  // so a relative path from a placeholder sibling is the same as from the final folder.
  const placeholder = path.join(outRoot, 'pending');
  const read = new Map();
  const locationPlugin = {
    name: 'source-locations',
    setup(builder) {
      builder.onLoad({ filter: /\.(ts|js|mjs)$/ }, (args) => {
        if (args.path.includes(`${path.sep}node_modules${path.sep}`)) return undefined;
        const { text, identity: id } = readWithIdentity(args.path);
        read.set(path.relative(root, args.path).split(path.sep).join('/'), id);
        const contents = text.includes(bundleLocationMarker) ? text : locationRewrite(text, args.path, placeholder);
        return { contents, loader: args.path.endsWith('.ts') ? 'ts' : 'js' };
      });
    },
  };
  const result = await esbuild.build({
    absWorkingDir: root,
    entryPoints: Object.fromEntries(Object.entries(entries).map(([name, source]) => [name, path.join(root, source)])),
    bundle: true,
    splitting: true,
    format: 'esm',
    platform: 'node',
    target: 'node20',
    packages: 'external',
    outdir: placeholder,
    entryNames: '[name]',
    chunkNames: 'chunk-[hash]',
    // Class and function names as in the sources (error classes, anything that prints a name).
    keepNames: true,
    sourcemap: 'linked',
    sourcesContent: false,
    metafile: true,
    write: false,
    logLevel: quiet ? 'error' : 'warning',
    plugins: [locationPlugin],
  });
  // Every input must have been read by the plugin (so its identity matches what was compiled).
  const inputs = {};
  for (const input of Object.keys(result.metafile.inputs).sort()) {
    const id = read.get(input);
    if (!id) throw new Error(`build: ${input} was not read through the location plugin`);
    inputs[input] = id;
  }
  for (const file of configFiles) inputs[file] = readWithIdentity(path.join(root, file)).identity;

  const hash = createHash('sha256');
  const outputs = [...result.outputFiles].sort((a, b) => (a.path < b.path ? -1 : 1));
  for (const file of outputs) hash.update(path.relative(placeholder, file.path)).update('\0').update(file.contents).update('\0');
  const folder = `build-${hash.digest('hex').slice(0, 16)}`;
  const target = path.join(outRoot, folder);
  if (!existsSync(path.join(target, 'cli.js'))) {
    // Written whole into a private folder, then renamed into place: a reader never sees a half-written file.
    const temporary = path.join(outRoot, `.tmp-${process.pid}-${Date.now()}`);
    for (const file of outputs) {
      const out = path.join(temporary, path.relative(placeholder, file.path));
      mkdirSync(path.dirname(out), { recursive: true });
      writeFileSync(out, file.contents);
    }
    try {
      renameSync(temporary, target);
    } catch (error) {
      // Another build of the same output got there first: the same bytes.
      rmSync(temporary, { recursive: true, force: true });
      if (!existsSync(path.join(target, 'cli.js'))) throw error;
    }
  }
  const manifest = {
    version: manifestVersion,
    folder,
    esbuild: esbuild.version,
    builtAt: new Date().toISOString(),
    entries: Object.fromEntries(Object.keys(entries).map((name) => [name, `${name}.js`])),
    inputs,
  };
  const manifestPath = path.join(outRoot, manifestName);
  const temporaryManifest = `${manifestPath}.${process.pid}.tmp`;
  writeFileSync(temporaryManifest, `${JSON.stringify(manifest, null, 1)}\n`);
  renameSync(temporaryManifest, manifestPath);
  pruneOldBuilds(outRoot, folder);
  if (!quiet) process.stderr.write(`build: ${Object.keys(inputs).length} sources -> ${path.relative(root, target) || target} (${outputs.length} files)\n`);
  return manifest;
}

/**
 * Removes builds other than the current one and the one before it (a process started on the
 * previous build may still load its lazy chunks or start its workers from there).
 */
function pruneOldBuilds(outRoot, current) {
  const builds = readdirSync(outRoot, { withFileTypes: true })
    .filter((d) => d.isDirectory() && d.name.startsWith('build-') && d.name !== current)
    .map((d) => ({ name: d.name, mtimeMs: fstatTime(path.join(outRoot, d.name)) }))
    .sort((a, b) => b.mtimeMs - a.mtimeMs);
  for (const old of builds.slice(1)) rmSync(path.join(outRoot, old.name), { recursive: true, force: true });
  for (const d of readdirSync(outRoot)) {
    // Leftovers of an interrupted build older than a minute.
    if (d.startsWith('.tmp-') && Date.now() - fstatTime(path.join(outRoot, d)) > 60_000) rmSync(path.join(outRoot, d), { recursive: true, force: true });
  }
}

function fstatTime(file) {
  const fd = openSync(file, 'r');
  try {
    return fstatSync(fd).mtimeMs;
  } finally {
    closeSync(fd);
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const args = process.argv.slice(2);
  const rootIndex = args.indexOf('--root');
  const root = rootIndex >= 0 ? path.resolve(args[rootIndex + 1]) : defaultRoot;
  try {
    await build({ root, quiet: args.includes('--quiet') });
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    if (!args.includes('--soft')) {
      process.stderr.write(`build failed: ${message}\n`);
      process.exitCode = 1;
    } else {
      process.stderr.write(`fleetwright build skipped (${message.split('\n')[0]}); the CLI runs the TypeScript sources through tsx instead\n`);
    }
  }
}
