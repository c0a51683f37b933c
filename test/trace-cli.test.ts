/**
 * Trace edges through the CLI (sim/engine.ts ends a run at its trace's last task and counts
 * rows after the run's end): the warning for unreleased rows goes to stderr, and the JSON
 * says how many and where the run ended.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const repositoryRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const smallHall = 'test/fixtures/cli-small-hall.yaml';
const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-trace-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function run(rows: string, ...args: string[]) {
  const trace = path.join(folder, `orders-${Math.abs(hash(rows))}.csv`);
  writeFileSync(trace, `releaseSeconds,pickup,drop\n${rows}`);
  const result = spawnSync(process.execPath, ['bin/fleetwright.js', 'run', smallHall, '--trace', trace, '--reps', '1', ...args], { cwd: repositoryRoot, encoding: 'utf8', timeout: 60_000 });
  if (result.error) throw result.error;
  return result;
}

function hash(text: string): number {
  let h = 0;
  for (const c of text) h = (h * 31 + c.charCodeAt(0)) | 0;
  return h;
}

describe('run --trace', () => {
  it('a trace longer than the run: a warning on stderr with the count of tasks not released, and trace.notReleased in JSON', () => {
    // A 0.25 h run ends at 900 s: the rows at 900 s and 2000 s are never released.
    const result = run('0,1:1,7:1\n10,1:1,7:2\n900,1:1,7:1\n2000,1:1,7:2\n', '--hours', '0.25', '--json');
    expect(result.status, result.stderr).toBe(0);
    expect(result.stderr).toBe("warning: 2 of 4 trace tasks fall after the run's end (0.25 h) and were never released\n");
    const summary = JSON.parse(result.stdout);
    expect(summary.trace).toEqual({ tasks: 4, notReleased: 2, endedAtLastTaskSeconds: null });
  });

  it('a trace shorter than the run ends it at its last task: no warning, the end in JSON and the table', () => {
    const json = run('0,1:1,7:1\n10,1:1,7:2\n', '--hours', '1', '--json');
    expect(json.status, json.stderr).toBe(0);
    expect(json.stderr).toBe('');
    const summary = JSON.parse(json.stdout);
    expect(summary.tasks.delivered).toBe(2);
    expect(summary.trace.notReleased).toBe(0);
    // By hand (1 s ticks, loading 4 s, tipping 2 s): robot 0 steps from 1:2 onto the pickup
    // at 1 s, loads until 5, drives 6 cells to 7:1 and delivers at 13; robot 1 takes the 10 s
    // task, is on the pickup at 12, loads until 16, drives 7 cells to 7:2 and delivers at 25.
    // The run covers 0..25 s: 26 s, and 2 tasks in 26 s is 276.9 tasks/h.
    expect(summary.trace.endedAtLastTaskSeconds).toBe(26);
    expect(summary.throughputPerHour.mean).toBeCloseTo((2 * 3600) / 26, 9);
    const table = run('0,1:1,7:1\n10,1:1,7:2\n', '--hours', '1');
    expect(table.stdout).toContain("the run ended when the trace's last task was done (26 s): throughput is over that span");
  });
});
