/**
 * The report, record and replay commands end to end, and their refusals: exit code 2 and
 * one line on stderr for a truncated, foreign or missing recording, a bad recording window
 * or path, and a folder that holds no results.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fleetwright } from './helpers-cli.ts';

const folder = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-report-cli-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));
const recording = path.join(folder, 'motion.fwr');

function expectOneLineRefusal(result: { status: number | null; stdout: string; stderr: string }, message: RegExp): void {
  expect(result.status, result.stderr).toBe(2);
  expect(result.stdout).toBe('');
  expect(result.stderr.trimEnd().split('\n'), result.stderr).toHaveLength(1);
  expect(result.stderr).toMatch(/^fleetwright: /);
  expect(result.stderr).toMatch(message);
}

beforeAll(() => {
  const run = fleetwright('run', 'test/fixtures/cli-small-hall.yaml', '--hours', '0.1', '--reps', '1', '--record', recording, '--record-window', '0:120', '--out', path.join(folder, 'run'));
  expect(run.status, run.stderr).toBe(0);
});

describe('record, replay and report on the command line', () => {
  it('records a window, writes a replay page and a report, each printing the path it wrote', () => {
    const replay = fleetwright('replay', recording, '--html', path.join(folder, 'replay.html'));
    expect(replay.status, replay.stderr).toBe(0);
    expect(replay.stdout).toBe(`replay written to ${path.join(folder, 'replay.html')}\n`);
    expect(readFileSync(path.join(folder, 'replay.html'), 'utf8')).toMatch(/^<!doctype html>/);
    const report = fleetwright('report', path.join(folder, 'run'));
    expect(report.status, report.stderr).toBe(0);
    expect(report.stdout).toBe(`report written to ${path.join(folder, 'run', 'report.html')}\n`);
  });

  it('the same results give a byte-identical report', () => {
    const a = path.join(folder, 'a.html');
    const b = path.join(folder, 'b.html');
    expect(fleetwright('report', path.join(folder, 'run'), '--html', a).status).toBe(0);
    expect(fleetwright('report', path.join(folder, 'run'), '--html', b).status).toBe(0);
    expect(readFileSync(a, 'utf8')).toBe(readFileSync(b, 'utf8'));
  });

  it('refuses a truncated recording: exit 2, one line', () => {
    const bytes = readFileSync(recording);
    const cut = path.join(folder, 'cut.fwr');
    writeFileSync(cut, bytes.subarray(0, Math.floor(bytes.length * 0.7)));
    expectOneLineRefusal(fleetwright('replay', cut), /cut\.fwr: truncated recording/);
  });

  it('refuses a foreign file: exit 2, one line', () => {
    const foreign = path.join(folder, 'notes.fwr');
    writeFileSync(foreign, 'name: Demo parcel hall\nlayout: |\n  #P.D#\n');
    expectOneLineRefusal(fleetwright('replay', foreign), /notes\.fwr: not a fleetwright motion recording/);
    expectOneLineRefusal(fleetwright('replay', path.join(folder, 'missing.fwr')), /<recording>: got .*missing\.fwr/);
  });

  it('refuses bad recording options before running anything', () => {
    expectOneLineRefusal(fleetwright('run', 'test/fixtures/cli-small-hall.yaml', '--record', path.join(folder, 'x.fwr'), '--record-window', '300:10'), /--record-window: got "300:10", expected FROM:TO/);
    expectOneLineRefusal(fleetwright('run', 'test/fixtures/cli-small-hall.yaml', '--record-window', '0:60'), /--record-window: .* without --record/);
    expectOneLineRefusal(fleetwright('run', 'test/fixtures/cli-small-hall.yaml', '--record', path.join(folder, 'no', 'such', 'x.fwr')), /--record: got .*, expected a file path in an existing folder/);
  });

  it('refuses a folder without results, and a damaged summary', () => {
    const empty = path.join(folder, 'empty');
    mkdirSync(empty);
    expectOneLineRefusal(fleetwright('report', empty), /holds none of summary\.json, comparison\.json, size\.json, runs\.jsonl/);
    const damaged = path.join(folder, 'damaged');
    mkdirSync(damaged);
    writeFileSync(path.join(damaged, 'summary.json'), '{"scenario": "half');
    expectOneLineRefusal(fleetwright('report', damaged), /summary\.json: not valid JSON/);
  });
});
