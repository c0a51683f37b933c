/**
 * The report's input files beside run results: the lead-time histogram, the per-cell
 * waiting rows and the context (command, version, scenario hash).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { leadTimeHistogram } from '../reports/lead-time-histogram.ts';
import { commandLine, scenarioSha256 } from '../reports/run-context.ts';
import { loadScenarioFile } from '../scenarios/load.ts';

const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-inputs-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

describe('lead-time histogram', () => {
  // Counted by hand: 0 and 3 in [0,5), 7 in [5,10), 12 in [10,15), 99.5 and the longest,
  // 100, in the top bin [95,100] (its upper edge included); 5 s is the "nice" step for
  // about 30 bins over 0..100 (1, 2 or 5 times a power of ten: 100/30 = 3.3 rounds to 5).
  it('counts every lead time once in bins of a round width', () => {
    const bins = leadTimeHistogram([0, 3, 7, 12, 99.5, 100]);
    expect(bins).toHaveLength(20);
    expect(bins.every((b) => b.toSeconds - b.fromSeconds === 5)).toBe(true);
    expect(bins.map((b) => b.tasks).join(' ')).toBe('2 1 1 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 2');
    expect(leadTimeHistogram([])).toEqual([]);
  });
});

describe('context', () => {
  it('quotes arguments the shell would split or expand', () => {
    expect(commandLine(['run', 'my hall.yaml', '--out', "it's"])).toBe(`fleetwright run 'my hall.yaml' --out 'it'\\''s'`);
  });

  it('hashes the effective scenario: the same from any folder, different after an override', () => {
    const text = readFileSync(path.join(import.meta.dirname, '..', 'scenarios', 'demo-sortation.yaml'), 'utf8');
    const a = path.join(folder, 'a.yaml');
    writeFileSync(a, text);
    const here = loadScenarioFile('scenarios/demo-sortation.yaml');
    expect(scenarioSha256(loadScenarioFile(a))).toBe(scenarioSha256(here));
    expect(scenarioSha256(here)).toMatch(/^[0-9a-f]{64}$/);
    expect(scenarioSha256(loadScenarioFile(a, { robots: 25 }))).not.toBe(scenarioSha256(here));
  });
});
