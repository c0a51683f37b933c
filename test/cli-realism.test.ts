/**
 * Operating realism through the real program (`node bin/fleetwright.js`): every new field's
 * bad value exits 2 with one line naming the field; the demo shift's JSON carries charging,
 * breakdowns and availability; with the new fields absent (or present but never acting) the
 * demo hall's JSON is byte-identical outside `timing`, so common random numbers and every
 * existing figure are untouched; a demand profile writes hourly.csv.
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { fleetwright, repositoryRoot } from './helpers-cli.ts';

const temporaryRoot = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-cli-realism-'));
afterAll(() => rmSync(temporaryRoot, { recursive: true, force: true }));
let count = 0;
function writeScenario(text: string): string {
  const folder = path.join(temporaryRoot, `case-${++count}`);
  mkdirSync(folder, { recursive: true });
  const file = path.join(folder, 'scenario.yaml');
  writeFileSync(file, text);
  return file;
}

const smallHall = readFileSync(path.join(repositoryRoot, 'test/fixtures/cli-small-hall.yaml'), 'utf8');
const demoText = readFileSync(path.join(repositoryRoot, 'scenarios/demo-sortation.yaml'), 'utf8');
function replaced(text: string, from: string, to: string): string {
  if (!text.includes(from)) throw new Error(`no ${JSON.stringify(from)} in the fixture`);
  return text.replace(from, to);
}
// The small hall with a charger on 4:3 (floor before).
const withCharger = replaced(smallHall, '#H......#', '#H..C...#');

const badCases: { name: string; text: string; message: RegExp }[] = [
  { name: 'station key that is no station', text: replaced(smallHall, 'handling: { pickupSeconds: 4, dropSeconds: 2 }', "handling: { pickupSeconds: 4, stations: { '3:1': { pickupSeconds: 6 } } }"), message: /handling\.stations\.3:1 \(line 10\): got "3:1", expected a station cell/ },
  { name: 'undefined station group', text: replaced(smallHall, 'handling: { pickupSeconds: 4, dropSeconds: 2 }', 'handling: { stations: { north: { pickupSeconds: 6 } } }'), message: /handling\.stations\.north \(line 10\): got "north", expected a station cell "x:y" or a group named in handling\.groups/ },
  { name: 'group member off the grid', text: replaced(smallHall, 'handling: { pickupSeconds: 4, dropSeconds: 2 }', "handling: { groups: { chutes: ['7:9'] } }"), message: /handling\.groups\.chutes\[0\] \(line 10\): got "7:9", expected a station cell written x:y inside the 9x5 grid/ },
  { name: 'negative station handling', text: replaced(smallHall, 'handling: { pickupSeconds: 4, dropSeconds: 2 }', "handling: { stations: { '7:1': { dropSeconds: -3 } } }"), message: /handling\.stations\.7:1\.dropSeconds \(line 10\): got -3, expected a number of seconds >= 0/ },
  { name: 'battery without a charger', text: replaced(smallHall, 'fleet: { robots: 2 }', 'fleet: { robots: 2, battery: { runHours: 8, chargeHours: 2 } }'), message: /fleet\.battery \(line 11\): got a battery, expected at least one charger \(C\)/ },
  { name: 'negative runHours', text: replaced(withCharger, 'fleet: { robots: 2 }', 'fleet: { robots: 2, battery: { runHours: -1, chargeHours: 2 } }'), message: /fleet\.battery\.runHours \(line 11\): got -1, expected hours of operation on a full charge > 0/ },
  { name: 'chargeHours as text', text: replaced(withCharger, 'fleet: { robots: 2 }', 'fleet: { robots: 2, battery: { runHours: 8, chargeHours: two } }'), message: /fleet\.battery\.chargeHours \(line 11\): got "two", expected hours to charge from empty to full > 0/ },
  { name: 'chargeUpTo not above chargeBelow', text: replaced(withCharger, 'fleet: { robots: 2 }', 'fleet: { robots: 2, battery: { runHours: 8, chargeHours: 2, chargeBelow: 0.5, chargeUpTo: 0.5 } }'), message: /fleet\.battery\.chargeUpTo \(line 11\): got 0\.5, expected a charge fraction > chargeBelow \(0\.5\) and <= 1/ },
  { name: 'mtbfHours 0', text: `${smallHall}faults: { breakdowns: { mtbfHours: 0, mttrMinutes: 30 } }\n`, message: /faults\.breakdowns\.mtbfHours \(line 15\): got 0, expected a mean in hours > 0/ },
  { name: 'mttrMinutes missing', text: `${smallHall}faults: { breakdowns: { mtbfHours: 2 } }\n`, message: /faults\.breakdowns\.mttrMinutes \(line 15\): got nothing \(the field is missing\)/ },
  { name: 'unknown fault kind', text: `${smallHall}faults: { floods: 1 }\n`, message: /faults\.floods \(line 15\): got unknown key "floods", expected one of breakdowns/ },
];

describe('bad operating-realism values exit 2 with one line naming the field', () => {
  it.each(badCases)('$name', ({ text, message }) => {
    const file = writeScenario(text);
    const result = fleetwright('run', file, '--json');
    expect(result.status).toBe(2);
    expect(result.stdout).toBe('');
    expect(result.stderr).toMatch(/^fleetwright: error: [^\n]+\n$/);
    expect(result.stderr).toMatch(message);
    expect(result.stderr).toContain(file);
  });
});

/** The JSON document without the wall-clock block. */
function parsedWithoutTiming(stdout: string): Record<string, unknown> {
  const document = JSON.parse(stdout);
  delete document.timing;
  return document;
}

describe('run --json with charging and breakdowns', () => {
  it('the demo shift reports charging, breakdowns, availability and the paired throughput lost', () => {
    const result = fleetwright('run', 'scenarios/demo-sortation-shift.yaml', '--hours', '0.5', '--reps', '2', '--json');
    expect(result.status, result.stderr).toBe(0);
    const summary = JSON.parse(result.stdout);
    expect(summary.collisions).toBe(0);
    expect(Object.keys(summary.robotTime)).toEqual(['loaded', 'empty', 'handling', 'waiting', 'parked', 'charging', 'broken']);
    const shares = Object.values(summary.robotTime as Record<string, { mean: number }>).reduce((s, v) => s + v.mean, 0);
    expect(shares).toBeCloseTo(1, 9);
    expect(summary.availability.mean).toBeCloseTo(1 - summary.robotTime.broken.mean, 9);
    expect(summary.charging).toMatchObject({ chargers: 6, runHours: 4, chargeHours: 1, chargeBelow: 0.2, chargeUpTo: 0.9, ranFlat: 0, warning: null });
    expect(summary.charging.byCharger.map((c: { cell: string }) => c.cell)).toEqual(['1:1', '3:1', '5:1', '1:18', '3:18', '5:18']);
    expect(summary.breakdowns).toMatchObject({ mtbfHours: 8, mttrMinutes: 20, expectedAvailability: 0.96 });
    expect(summary.breakdowns.throughputLostPerHour.n).toBe(2);
    const split = summary.leadTimeSplit;
    expect(split.waitingForRobotSeconds.mean + split.emptyTravelSeconds.mean + split.loadedTravelSeconds.mean + split.handlingSeconds.mean).toBeCloseTo(summary.leadTimeSeconds.mean, 6);
  });
});

describe('the new fields absent, or present but never acting, change nothing', () => {
  it('the demo hall JSON outside timing is byte-identical, and carries no realism block but the lead-time split', () => {
    const args = ['--robots', '12', '--hours', '0.25', '--reps', '2', '--seed', '4', '--json'];
    const plain = fleetwright('run', 'scenarios/demo-sortation.yaml', ...args);
    expect(plain.status, plain.stderr).toBe(0);
    // Inert: a charger in the unused corner 1:1, a battery that lasts 1000 h, a first breakdown
    // after 10,000 h, and a station override equal to the default (fixed handling draws nothing).
    let inert = replaced(demoText, '  #.....H..H..H..H..H..H..H..H..H..H....H#\n  #P...', '  #C....H..H..H..H..H..H..H..H..H..H....H#\n  #P...');
    inert = replaced(inert, 'fleet: { robots: 24 }', 'fleet: { robots: 24, battery: { runHours: 1000, chargeHours: 1 } }\nfaults: { breakdowns: { mtbfHours: { dist: fixed, hours: 10000 }, mttrMinutes: 1 } }');
    inert = replaced(inert, '  pickupSeconds: 4                                # loading at the induct point', "  pickupSeconds: 4\n  stations: { '1:2': { pickupSeconds: 4 } }");
    const acted = fleetwright('run', writeScenario(inert), ...args);
    expect(acted.status, acted.stderr).toBe(0);
    const before = parsedWithoutTiming(plain.stdout);
    const after = parsedWithoutTiming(acted.stdout);
    for (const key of ['availability', 'charging', 'breakdowns', 'hourly', 'waitingBehindFixedFraction']) expect(key in before).toBe(false);
    expect('charging' in (before.robotTime as object)).toBe(false);
    expect('leadTimeSplit' in before).toBe(true);
    // What the inert run adds, and nothing else.
    expect((after.charging as { ranFlat: number }).ranFlat).toBe(0);
    expect((after.robotTime as { charging: { mean: number } }).charging.mean).toBe(0);
    expect((after.breakdowns as { failuresPerHour: { mean: number } }).failuresPerHour.mean).toBe(0);
    expect((after.waitingBehindFixedFraction as { mean: number }).mean).toBe(0);
    for (const key of ['availability', 'charging', 'breakdowns', 'waitingBehindFixedFraction']) delete after[key];
    delete (after.robotTime as Record<string, unknown>).charging;
    delete (after.robotTime as Record<string, unknown>).broken;
    expect(JSON.stringify(after, null, 2)).toBe(JSON.stringify(before, null, 2));
  });
});

describe('hourly profile', () => {
  it('run --out with a demand profile writes hourly.csv and the table shows the peak hour', () => {
    const text = replaced(demoText, '  # profile: [0.8, 1.0, 1.2, 1.0]                  # optional hourly multipliers, repeating', '  profile: [0.5, 1.5]');
    const file = writeScenario(text);
    const out = path.join(path.dirname(file), 'results');
    const result = fleetwright('run', file, '--hours', '2', '--reps', '2', '--out', out);
    expect(result.status, result.stderr).toBe(0);
    expect(readdirSync(out)).toContain('hourly.csv');
    const rows = readFileSync(path.join(out, 'hourly.csv'), 'utf8').trim().split('\n');
    expect(rows[0]).toBe('hour,multiplier,peak,releasedPerHour,releasedPerHourHalfWidth,throughputPerHour,throughputPerHourHalfWidth,leadTimeSeconds,leadTimeSecondsHalfWidth');
    expect(rows.slice(1).map((r) => r.split(',').slice(0, 3).join(','))).toEqual(['0,0.5,false', '1,1.5,true']);
    expect(result.stdout).toMatch(/hourly profile \(2 whole hours after the warm-up; .* peak hour 1 is what the site is sized for\)/);
    expect(result.stdout).toMatch(/\n1 \(peak\) +1\.50 /);
    // The same folder rerun without the profile: its hourly.csv would describe the other run.
    const flat = writeScenario(demoText);
    const again = fleetwright('run', flat, '--hours', '1', '--reps', '2', '--out', out);
    expect(again.status, again.stderr).toBe(0);
    expect(readdirSync(out)).not.toContain('hourly.csv');
    expect(readdirSync(out)).toContain('summary.json');
  });
});
