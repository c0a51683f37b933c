/**
 * The compiled build (build/build.js, chosen by build/fresh.js): the built CLI prints the same
 * JSON as the TypeScript sources under tsx outside `timing` (one replication loop in the main
 * thread, and a size run on worker threads, which must be the compiled workers), and a source
 * edited after the build is what runs (the build is then stale and the CLI falls back to
 * tsx) until the next build. Each test works on a copy of the repository's sources in a
 * temporary folder (node_modules linked), so it never touches this checkout's dist/.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, mkdtempSync, readFileSync, rmSync, symlinkSync, unlinkSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const repositoryRoot = path.resolve(import.meta.dirname, '..');
const copied = ['sim', 'policies', 'scenarios', 'reports', 'experiments', 'cli', 'bench', 'bin', 'build', 'test', 'package.json', 'tsconfig.json'];
let copy = '';

beforeAll(() => {
  copy = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-build-'));
  for (const entry of copied) cpSync(path.join(repositoryRoot, entry), path.join(copy, entry), { recursive: true });
  symlinkSync(path.join(repositoryRoot, 'node_modules'), path.join(copy, 'node_modules'), 'dir');
  buildCopy();
});
afterAll(() => {
  if (copy) rmSync(copy, { recursive: true, force: true });
});

function buildCopy(): void {
  const result = spawnSync(process.execPath, ['build/build.js', '--quiet'], { cwd: copy, encoding: 'utf8' });
  expect(result.stderr).toBe('');
  expect(result.status).toBe(0);
}

/** Runs the copy's CLI; `mode` is FLEETWRIGHT_BUILD (explain: stderr says which code ran). */
function cli(mode: 'explain' | 'off', ...args: string[]) {
  const result = spawnSync(process.execPath, ['bin/fleetwright.js', ...args], { cwd: copy, encoding: 'utf8', env: { ...process.env, FLEETWRIGHT_BUILD: mode }, timeout: 120_000 });
  if (result.error) throw result.error;
  return result;
}

/** The document without wall-clock figures (DESIGN: only `timing` may differ between runs). */
function withoutTiming(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(withoutTiming);
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const [key, inner] of Object.entries(value)) if (key !== 'timing') out[key] = withoutTiming(inner);
    return out;
  }
  return value;
}

describe('the compiled build', () => {
  it('run --json: the built CLI gives the same document as the sources under tsx', () => {
    const args = ['run', 'test/fixtures/cli-small-hall.yaml', '--json', '--reps', '2'];
    const built = cli('explain', ...args);
    expect(built.stderr).toMatch(/^fleetwright: running the build dist\/build-[0-9a-f]+\/cli\.js\n$/);
    const sources = cli('off', ...args);
    expect(sources.stderr).toBe('');
    expect(built.status).toBe(0);
    expect(sources.status).toBe(0);
    const builtDocument = JSON.parse(built.stdout);
    expect(builtDocument.timing).toBeDefined();
    expect(withoutTiming(builtDocument)).toEqual(withoutTiming(JSON.parse(sources.stdout)));
  });

  it('size on two worker threads: the same document, computed by the compiled workers', () => {
    const args = ['size', 'test/fixtures/cli-small-hall.yaml', '--target', '880', '--reps', '2', '--workers', '2', '--json'];
    const sources = cli('off', ...args);
    expect(sources.status).toBe(0);
    // The tsx entry of the workers is gone: only a build that starts its own compiled worker can answer.
    const tsxWorker = path.join(copy, 'experiments', 'replication-worker.js');
    const tsxWorkerText = readFileSync(tsxWorker, 'utf8');
    unlinkSync(tsxWorker);
    try {
      const built = cli('explain', ...args);
      expect(built.stderr).toMatch(/running the build/);
      expect(built.status).toBe(0);
      expect(withoutTiming(JSON.parse(built.stdout))).toEqual(withoutTiming(JSON.parse(sources.stdout)));
    } finally {
      writeFileSync(tsxWorker, tsxWorkerText);
    }
  });

  it('a source edited after the build runs as edited (through tsx) until the next build', () => {
    const main = path.join(copy, 'cli', 'main.ts');
    const text = readFileSync(main, 'utf8');
    expect(cli('explain', '--version').stdout).toBe('0.1.0\n');
    try {
      // Same length, so only the modification time tells the file changed.
      writeFileSync(main, text.replace(".version('0.1.0')", ".version('9.1.0')"));
      const stale = cli('explain', '--version');
      expect(stale.stdout).toBe('9.1.0\n');
      expect(stale.stderr).toBe('fleetwright: running the sources through tsx: cli/main.ts changed since the build\n');
      buildCopy();
      const rebuilt = cli('explain', '--version');
      expect(rebuilt.stdout).toBe('9.1.0\n');
      expect(rebuilt.stderr).toMatch(/running the build/);
    } finally {
      writeFileSync(main, text);
      buildCopy();
    }
  });

  it('a deleted source, a changed build script or a missing build all fall back to tsx', () => {
    const module = path.join(copy, 'sim', 'errors.ts');
    const text = readFileSync(module, 'utf8');
    try {
      unlinkSync(module);
      // Under tsx the program itself now fails to load: what matters is that the build was not used.
      expect(cli('explain', '--version').stderr).toMatch(/^fleetwright: running the sources through tsx: sim\/errors\.ts is gone since the build\n/);
    } finally {
      writeFileSync(module, text);
    }
    buildCopy();
    const script = path.join(copy, 'build', 'build.js');
    const scriptText = readFileSync(script, 'utf8');
    try {
      writeFileSync(script, `${scriptText}\n// edited\n`);
      expect(cli('explain', '--version').stderr).toBe('fleetwright: running the sources through tsx: build/build.js changed since the build\n');
    } finally {
      writeFileSync(script, scriptText);
    }
    rmSync(path.join(copy, 'dist'), { recursive: true, force: true });
    const missing = cli('explain', '--version');
    expect(missing.stdout).toBe('0.1.0\n');
    expect(missing.stderr).toBe('fleetwright: running the sources through tsx: no build (run npm run build)\n');
    buildCopy();
  });
});
