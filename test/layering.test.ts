/**
 * The layering rules of the repository (DEVELOPERS.md): `sim/` imports nothing from the
 * other folders; policies never import reports or cli; reports never import policies;
 * scenarios never import policies, reports, experiments or cli. Checked on the source text
 * of every TypeScript file, so a new import that breaks a rule fails here.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '..');

function filesUnder(folder: string): string[] {
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = path.join(dir, name);
      if (statSync(full).isDirectory()) walk(full);
      else if (name.endsWith('.ts')) out.push(full);
    }
  };
  walk(path.join(root, folder));
  return out;
}

/** Top-level folders a file imports from (relative imports only). */
function importedFolders(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const folders = new Set<string>();
  for (const match of text.matchAll(/(?:import|export)[^'"]*?from\s+['"](\.[^'"]+)['"]|import\(\s*['"](\.[^'"]+)['"]\s*\)/g)) {
    const spec = match[1] ?? match[2];
    const target = path.relative(root, path.resolve(path.dirname(file), spec));
    folders.add(target.split(path.sep)[0]);
  }
  return [...folders];
}

const rules: Record<string, string[]> = {
  sim: ['policies', 'scenarios', 'reports', 'experiments', 'cli'],
  policies: ['reports', 'cli', 'scenarios', 'experiments'],
  reports: ['policies', 'cli'],
  scenarios: ['policies', 'reports', 'experiments', 'cli'],
};

describe('layering', () => {
  for (const [folder, forbidden] of Object.entries(rules)) {
    it(`${folder}/ imports nothing from ${forbidden.join(', ')}`, () => {
      const breaks: string[] = [];
      for (const file of filesUnder(folder)) {
        for (const target of importedFolders(file)) if (forbidden.includes(target)) breaks.push(`${path.relative(root, file)} -> ${target}/`);
      }
      expect(breaks).toEqual([]);
    });
  }

  it('the import scanner sees relative imports (guards the checks above)', () => {
    const breaks = importedFolders(path.join(root, 'experiments', 'replications.ts'));
    expect(breaks).toContain('policies');
    expect(breaks).toContain('sim');
  });
});
