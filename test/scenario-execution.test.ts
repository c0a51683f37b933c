/**
 * Scenario fields for turning and execution delays (README "Turning and execution delays"):
 * `units.turnSeconds` and `faults.delays {probabilityPerMove, seconds}`. Every bad value is
 * one InputError line naming the field and what was expected, through the loader and
 * through the real program (exit code 2, nothing on stdout); good values normalize to
 * seconds.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../sim/errors.ts';
import { parseScenarioText } from '../scenarios/load.ts';
import { fleetwright, repositoryRoot } from './helpers-cli.ts';

const smallHall = readFileSync(path.join(repositoryRoot, 'test/fixtures/cli-small-hall.yaml'), 'utf8');
/** The small hall with a units line (line 4) and a faults line (line 16). */
function hall(parts: { units?: string; faults?: string }): string {
  const lines = smallHall.trimEnd().split('\n');
  lines.splice(3, 0, `units: ${parts.units ?? '{ cellMeters: 1, robotSpeedMps: 1 }'}`);
  if (parts.faults !== undefined) lines.push(`faults: ${parts.faults}`);
  return `${lines.join('\n')}\n`;
}

function messageOf(text: string): string {
  try {
    parseScenarioText(text, 'hall.yaml');
  } catch (error) {
    expect(error).toBeInstanceOf(InputError);
    return (error as Error).message;
  }
  throw new Error('no error');
}

const bad: [string, Parameters<typeof hall>[0], RegExp][] = [
  ['negative turnSeconds', { units: '{ cellMeters: 1, robotSpeedMps: 1, turnSeconds: -1 }' }, /units\.turnSeconds \(line 4\): got -1, expected a number of seconds >= 0 \(a 90-degree turn in place; 0: no turning time\)/],
  ['turnSeconds as text', { units: '{ turnSeconds: slow }' }, /units\.turnSeconds \(line 4\): got "slow", expected a number of seconds >= 0/],
  ['turnSeconds .inf', { units: '{ turnSeconds: .inf }' }, /units\.turnSeconds \(line 4\): got Infinity \(\.inf\), expected a number of seconds >= 0/],
  ['unknown key under units', { units: '{ turnDegrees: 90 }' }, /units\.turnDegrees \(line 4\): got unknown key "turnDegrees", expected one of cellMeters, robotSpeedMps, turnSeconds/],
  ['delay probability 1', { faults: '{ delays: { probabilityPerMove: 1, seconds: 3 } }' }, /faults\.delays\.probabilityPerMove \(line 16\): got 1, expected a probability >= 0 and < 1 \(the chance that a move is held back\)/],
  ['negative delay probability', { faults: '{ delays: { probabilityPerMove: -0.1, seconds: 3 } }' }, /faults\.delays\.probabilityPerMove \(line 16\): got -0\.1, expected a probability >= 0 and < 1/],
  ['delay probability missing', { faults: '{ delays: { seconds: 3 } }' }, /faults\.delays\.probabilityPerMove \(line 16\): got nothing \(the field is missing\), expected a probability >= 0 and < 1/],
  ['delay of 0 s', { faults: '{ delays: { probabilityPerMove: 0.1, seconds: 0 } }' }, /faults\.delays\.seconds \(line 16\): got 0, expected a number of seconds > 0/],
  ['delay seconds missing', { faults: '{ delays: { probabilityPerMove: 0.1 } }' }, /faults\.delays\.seconds \(line 16\): got nothing \(the field is missing\), expected a number of seconds > 0, or \{dist: uniform, min, max\}/],
  ['uniform delay with min > max', { faults: '{ delays: { probabilityPerMove: 0.1, seconds: { dist: uniform, min: 5, max: 2 } } }' }, /faults\.delays\.seconds\.max \(line 16\): got 2, expected a number of seconds >= min \(5\)/],
  ['unknown delay distribution', { faults: '{ delays: { probabilityPerMove: 0.1, seconds: { dist: lognormal, mean: 3 } } }' }, /faults\.delays\.seconds\.dist \(line 16\): got "lognormal", expected dist: fixed, uniform or exponential/],
  ['exponential delay with mean 0', { faults: '{ delays: { probabilityPerMove: 0.1, seconds: { dist: exponential, mean: 0 } } }' }, /faults\.delays\.seconds\.mean \(line 16\): got 0, expected a mean in seconds > 0/],
  ['unknown key under delays', { faults: '{ delays: { probabilityPerMove: 0.1, seconds: 3, perRobot: true } }' }, /faults\.delays\.perRobot \(line 16\): got unknown key "perRobot", expected one of probabilityPerMove, seconds/],
  ['delays as a number', { faults: '{ delays: 0.1 }' }, /faults\.delays \(line 16\): got 0\.1, expected a mapping \{probabilityPerMove, seconds\}/],
];

describe('turning and delay fields reject bad values with one line naming the field (loader)', () => {
  it.each(bad)('%s', (_name, parts, message) => {
    const text = messageOf(hall(parts));
    expect(text).not.toContain('\n');
    expect(text).toMatch(message);
  });

  it('normalizes good values: a turn time, a fixed delay as a number, a distribution as given', () => {
    const scenario = parseScenarioText(hall({ units: '{ turnSeconds: 1.5 }', faults: '{ delays: { probabilityPerMove: 0.05, seconds: 3 } }' }), 'hall.yaml');
    expect(scenario.units).toEqual({ cellMeters: 1, robotSpeedMps: 1, turnSeconds: 1.5 });
    expect(scenario.faults).toEqual({ delays: { probabilityPerMove: 0.05, seconds: { dist: 'fixed', seconds: 3 } } });
    const spread = parseScenarioText(hall({ faults: '{ delays: { probabilityPerMove: 0, seconds: { dist: uniform, min: 1, max: 5 } } }' }), 'hall.yaml');
    expect(spread.faults?.delays?.seconds).toEqual({ dist: 'uniform', min: 1, max: 5 });
    // Absent fields stay absent (scenarios without them hash and echo as before).
    const plain = parseScenarioText(smallHall, 'hall.yaml');
    expect('turnSeconds' in plain.units).toBe(false);
    expect(plain.faults).toBeUndefined();
  });
});

const temporaryRoot = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-cli-execution-'));
afterAll(() => rmSync(temporaryRoot, { recursive: true, force: true }));
let count = 0;

describe('turning and delay fields reject bad values with exit 2 and one line (the real program)', () => {
  it.each(bad.filter((_, i) => i % 2 === 0))('%s', (_name, parts, message) => {
    const folder = path.join(temporaryRoot, `case-${++count}`);
    mkdirSync(folder, { recursive: true });
    const file = path.join(folder, 'scenario.yaml');
    writeFileSync(file, hall(parts));
    const result = fleetwright('run', file, '--json');
    expect(result.status).toBe(2);
    expect(result.stdout).toBe('');
    expect(result.stderr).toMatch(/^fleetwright: error: [^\n]+\n$/);
    expect(result.stderr).toMatch(message);
  });

  it('a scenario with turning and delays runs: its JSON has the turning and delays blocks, with the paired throughput lost', () => {
    const folder = path.join(temporaryRoot, `case-${++count}`);
    mkdirSync(folder, { recursive: true });
    const file = path.join(folder, 'scenario.yaml');
    writeFileSync(file, hall({ units: '{ turnSeconds: 1 }', faults: '{ delays: { probabilityPerMove: 0.1, seconds: 2 } }' }));
    const result = fleetwright('run', file, '--json');
    expect(result.status).toBe(0);
    const summary = JSON.parse(result.stdout);
    expect(summary.turning.turnSeconds).toBe(1);
    expect(summary.turning.modelledTurnSeconds).toBe(1);
    expect(summary.turning.quarterTurnsPerRobotHour.mean).toBeGreaterThan(0);
    expect(summary.delays.probabilityPerMove).toBe(0.1);
    expect(summary.delays.throughputLostPerHour.n).toBe(2);
    expect(summary.delays.dependencyWaitsPerHour.mean).toBeGreaterThanOrEqual(0);
    expect(summary.collisions).toBe(0);
  });
});
