import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import seedrandom from 'seedrandom';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../sim/errors.ts';
import { loadScenarioFile, parseScenarioText, type ScenarioOverrides } from '../scenarios/load.ts';

const root = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-scenario-load-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
let folderCount = 0;

/** Writes files into a fresh folder under the temp root and returns the folder. */
function writeFolder(files: Record<string, string | Buffer>): string {
  const folder = path.join(root, `case-${++folderCount}`);
  mkdirSync(folder, { recursive: true });
  for (const [name, content] of Object.entries(files)) {
    mkdirSync(path.dirname(path.join(folder, name)), { recursive: true });
    writeFileSync(path.join(folder, name), content);
  }
  return folder;
}

// 9 x 5 hall: pickup 1:1, drops 7:1 and 7:2, parking 1:2 and 1:3, 21 passable cells.
const hall = ['#########', '#P.....D#', '#H.....D#', '#H......#', '#########'];

type Section = 'name' | 'layout' | 'handling' | 'fleet' | 'demand' | 'policy' | 'run';
const baseSections: Record<Section, string> = {
  name: 'Test hall',
  layout: blockLayout(hall),
  handling: '{ pickupSeconds: 4, dropSeconds: 2 }',
  fleet: '{ robots: 2 }',
  demand: '{ kind: poisson, tasksPerHour: 600 }',
  policy: '{ name: token-passing }',
  run: '{ hours: 4, replications: 3, seed: 7 }',
};

function blockLayout(rows: string[]): string {
  return '|\n' + rows.map((row) => `  ${row}`).join('\n');
}

/** Scenario YAML from the base with some sections replaced (null drops one) and extra lines appended. */
function scenario(changes: Partial<Record<Section, string | null>> = {}, extra = ''): string {
  const lines: string[] = [];
  for (const key of Object.keys(baseSections) as Section[]) {
    const value = key in changes ? changes[key] : baseSections[key];
    if (value === null || value === undefined) continue;
    lines.push(`${key}: ${value}`);
  }
  return lines.join('\n') + '\n' + extra;
}

interface MalformedCase {
  name: string;
  yaml?: string;
  /** Other files in the scenario's folder (trace files). */
  files?: Record<string, string | Buffer>;
  /** Raw bytes instead of yaml. */
  bytes?: Buffer;
  overrides?: ScenarioOverrides;
  message: RegExp;
}

function garbage(): Buffer {
  const rng = seedrandom('garbage');
  const bytes = Buffer.alloc(512);
  for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor(rng() * 256);
  bytes[17] = 0;
  bytes[300] = 0;
  return bytes;
}

const malformed: MalformedCase[] = [
  // Layout
  { name: 'ragged layout row', yaml: scenario({ layout: blockLayout(['#########', '#P.....D#', '#H....D#', '#########']) }), message: /layout \(line 5\): row 3 has 8 cells, expected 9/ },
  { name: 'unknown layout character', yaml: scenario({ layout: blockLayout(['#########', '#P..X..D#', '#########']) }), message: /layout \(line 4\): row 2 column 5 has "X", expected one of/ },
  { name: 'no pickup point', yaml: scenario({ layout: blockLayout(['#########', '#H.....D#', '#########']) }), message: /layout \(line \d+\): got no pickup point \(P\)/ },
  { name: 'no drop point', yaml: scenario({ layout: blockLayout(['#########', '#P.....H#', '#########']) }), message: /layout \(line \d+\): got no drop point \(D\)/ },
  {
    name: 'walled-in drop',
    yaml: scenario({ layout: blockLayout(['#########', '#P....#D#', '#H....###', '#H......#', '#########']) }),
    message: /layout \(line 4\): got drop 7:1 that cannot be reached from pickup 1:1/,
  },
  { name: 'round-trip without storage', yaml: scenario({ demand: '{ kind: saturated, mode: round-trip }' }), message: /layout .*got no storage point \(S\)/ },
  { name: 'layout missing', yaml: scenario({ layout: null }), message: /: layout: got nothing \(the field is missing\), expected the floor/ },
  // Fleet
  { name: 'robots 0', yaml: scenario({ fleet: '{ robots: 0 }' }), message: /fleet\.robots \(line 9\): got 0, expected a positive integer/ },
  { name: 'robots -3', yaml: scenario({ fleet: '{ robots: -3 }' }), message: /fleet\.robots \(line 9\): got -3, expected a positive integer/ },
  { name: 'robots 2.5', yaml: scenario({ fleet: '{ robots: 2.5 }' }), message: /fleet\.robots \(line 9\): got 2\.5, expected a positive integer/ },
  { name: 'robots "ten"', yaml: scenario({ fleet: '{ robots: ten }' }), message: /fleet\.robots \(line 9\): got "ten", expected a positive integer/ },
  { name: 'more robots than passable cells', yaml: scenario({ fleet: '{ robots: 22 }' }), message: /fleet\.robots \(line 9\): got 22, expected at most 21/ },
  { name: '--robots 0 override', yaml: scenario(), overrides: { robots: 0 }, message: /: --robots: got 0, expected a positive integer/ },
  // Demand
  { name: 'negative tasksPerHour', yaml: scenario({ demand: '{ kind: poisson, tasksPerHour: -5 }' }), message: /demand\.tasksPerHour \(line 10\): got -5, expected tasks per hour > 0/ },
  { name: 'NaN tasksPerHour', yaml: scenario({ demand: '{ kind: poisson, tasksPerHour: .nan }' }), message: /demand\.tasksPerHour \(line 10\): got NaN/ },
  { name: 'infinite tasksPerHour', yaml: scenario({ demand: '{ kind: poisson, tasksPerHour: .inf }' }), message: /demand\.tasksPerHour \(line 10\): got Infinity/ },
  { name: '--rate -1 override', yaml: scenario(), overrides: { tasksPerHour: -1 }, message: /: --rate: got -1, expected tasks per hour > 0/ },
  { name: 'unknown demand kind', yaml: scenario({ demand: '{ kind: burst, tasksPerHour: 5 }' }), message: /demand\.kind \(line 10\): got "burst", expected poisson, saturated or trace/ },
  { name: 'demand kind missing', yaml: scenario({ demand: '{ tasksPerHour: 5 }' }), message: /demand\.kind \(line 10\): got nothing/ },
  { name: 'rate on saturated demand', yaml: scenario({ demand: '{ kind: saturated, tasksPerHour: 5 }' }), message: /demand\.tasksPerHour \(line 10\): got unknown key "tasksPerHour", expected one of .* \(for kind: saturated\)/ },
  { name: 'profile all zeros', yaml: scenario({ demand: '{ kind: poisson, tasksPerHour: 5, profile: [0, 0] }' }), message: /demand\.profile \(line 10\): got the list \[0,0\], expected .*at least one > 0/ },
  { name: 'negative profile entry', yaml: scenario({ demand: '{ kind: poisson, tasksPerHour: 5, profile: [1, -2] }' }), message: /demand\.profile\[1\] \(line 10\): got -2, expected an hourly multiplier >= 0/ },
  { name: 'weights on a non-pickup cell', yaml: scenario({ demand: "{ kind: poisson, tasksPerHour: 5, pickups: { weights: { '1:1': 1, '3:1': 2 } } }" }), message: /demand\.pickups\.weights\.3:1 \(line 10\): got "3:1", expected a pickup point \(P\), not floor 3:1/ },
  { name: 'weights outside the grid', yaml: scenario({ demand: "{ kind: saturated, drops: { weights: { '70:1': 1 } } }" }), message: /demand\.drops\.weights\.70:1 .*got "70:1", expected a drop point \(D\) written x:y inside the 9x5 grid/ },
  { name: 'weights summing to zero', yaml: scenario({ demand: "{ kind: saturated, pickups: { weights: { '1:1': 0 } } }" }), message: /demand\.pickups\.weights \(line 10\): got the mapping \{"1:1":0\}, expected weights with a positive sum/ },
  { name: 'negative Zipf skew', yaml: scenario({ demand: '{ kind: saturated, drops: { skew: -1 } }' }), message: /demand\.drops\.skew \(line 10\): got -1, expected a Zipf exponent >= 0/ },
  { name: 'drops with skew and weights', yaml: scenario({ demand: "{ kind: saturated, drops: { skew: 1, weights: { '7:1': 1 } } }" }), message: /demand\.drops \(line 10\): got the mapping .*expected exactly one of skew or weights/ },
  { name: 'pickups as unknown word', yaml: scenario({ demand: '{ kind: saturated, pickups: random }' }), message: /demand\.pickups \(line 10\): got "random", expected uniform or \{weights/ },
  { name: 'missing trace file', yaml: scenario({ demand: '{ kind: trace, trace: orders.csv }' }), message: /demand\.trace \(line 10\): got "orders\.csv", expected a readable CSV trace file \(no such file: .*orders\.csv\)/ },
  {
    name: 'trace row with a cell that is not a pickup',
    yaml: scenario({ demand: '{ kind: trace, trace: orders.csv }' }),
    files: { 'orders.csv': 'releaseSeconds,pickup,drop\n0,1:1,7:1\n10,3:2,7:1\n' },
    message: /orders\.csv: row 2 \(line 3\) pickup: got "3:2" \(floor 3:2\), expected a pickup point \(P\)/,
  },
  {
    name: 'trace row with a negative release time',
    yaml: scenario({ demand: '{ kind: trace, trace: orders.csv }' }),
    files: { 'orders.csv': 'releaseSeconds,pickup,drop\n-4,1:1,7:1\n' },
    message: /orders\.csv: row 1 \(line 2\) releaseSeconds: got "-4", expected a finite number of seconds >= 0/,
  },
  {
    name: 'trace without the drop column',
    yaml: scenario({ demand: '{ kind: trace, trace: orders.csv }' }),
    files: { 'orders.csv': 'releaseSeconds,pickup\n0,1:1\n' },
    message: /orders\.csv: header \(line 1\): got "releaseSeconds,pickup", expected the columns releaseSeconds,pickup,drop/,
  },
  // Handling and units
  { name: 'negative handling time', yaml: scenario({ handling: '{ pickupSeconds: -2 }' }), message: /handling\.pickupSeconds \(line 8\): got -2, expected a number of seconds >= 0/ },
  { name: 'uniform with min > max', yaml: scenario({ handling: '{ pickupSeconds: { dist: uniform, min: 6, max: 2 } }' }), message: /handling\.pickupSeconds\.max \(line 8\): got 2, expected a number of seconds >= min \(6\)/ },
  { name: 'exponential mean 0', yaml: scenario({ handling: '{ dropSeconds: { dist: exponential, mean: 0 } }' }), message: /handling\.dropSeconds\.mean \(line 8\): got 0, expected a mean in seconds > 0/ },
  { name: 'unknown distribution', yaml: scenario({ handling: '{ dropSeconds: { dist: normal, mean: 3 } }' }), message: /handling\.dropSeconds\.dist \(line 8\): got "normal", expected dist: fixed, uniform or exponential/ },
  { name: 'handling as text', yaml: scenario({ handling: '{ dropSeconds: soon }' }), message: /handling\.dropSeconds \(line 8\): got "soon", expected a number of seconds >= 0, or \{dist/ },
  { name: 'cellMeters 0', yaml: scenario({}, 'units: { cellMeters: 0 }\n'), message: /units\.cellMeters \(line 13\): got 0, expected a cell size in meters > 0/ },
  // Run
  { name: 'hours -1', yaml: scenario({ run: '{ hours: -1 }' }), message: /run\.hours \(line 12\): got -1, expected a number of hours > 0/ },
  { name: 'warm-up longer than the run', yaml: scenario({ run: '{ hours: 4, warmup: 5 }' }), message: /run\.warmup \(line 12\): got 5, expected auto or a number of hours >= 0 and < run\.hours \(4\)/ },
  { name: 'confidence 1.5', yaml: scenario({ run: '{ confidence: 1.5 }' }), message: /run\.confidence \(line 12\): got 1\.5, expected a number between 0 and 1/ },
  { name: 'replications 0', yaml: scenario({ run: '{ replications: 0 }' }), message: /run\.replications \(line 12\): got 0, expected a positive integer/ },
  { name: 'fractional seed', yaml: scenario({ run: '{ seed: 1.5 }' }), message: /run\.seed \(line 12\): got 1\.5, expected a non-negative integer/ },
  { name: 'sampleSeconds 0', yaml: scenario({ run: '{ sampleSeconds: 0 }' }), message: /run\.sampleSeconds \(line 12\): got 0, expected a number of seconds > 0/ },
  { name: 'unknown key inside run', yaml: scenario({ run: '{ hours: 4, repetitions: 3 }' }), message: /run\.repetitions \(line 12\): got unknown key "repetitions", expected one of hours, warmup, replications/ },
  { name: 'warm-up override beyond hours override', yaml: scenario(), overrides: { hours: 1, warmup: 2 }, message: /: --warmup: got 2, expected .*< run\.hours \(1\)/ },
  // Structure
  { name: 'unknown top-level key', yaml: scenario({}, 'speed: 3\n'), message: /: speed \(line 13\): got unknown key "speed", expected one of name, units, layout/ },
  { name: 'policy without a name', yaml: scenario({ policy: '{ horizon: 5 }' }), message: /policy\.name \(line 11\): got nothing/ },
  { name: 'bad YAML', yaml: 'name: x\nfleet: { robots: 2\nrun: [1, 2\n', message: /\(line \d+\): got invalid YAML \(.+\), expected a YAML mapping/ },
  { name: 'duplicate key', yaml: scenario({}, 'fleet: { robots: 3 }\n'), message: /\(line 13\): got invalid YAML \(Map keys must be unique\)/ },
  { name: 'empty file', yaml: '', message: /: got an empty file, expected a YAML mapping/ },
  { name: 'only comments', yaml: '# nothing here\n', message: /: got an empty file/ },
  { name: 'YAML that is a list', yaml: '- a\n- b\n', message: /\(line 1\): got the list \["a","b"\] at the top level, expected a mapping of scenario fields/ },
  { name: 'YAML that is a word', yaml: 'hello\n', message: /\(line 1\): got "hello" at the top level/ },
  { name: 'binary garbage', bytes: garbage(), message: /: got binary data \(a NUL byte at offset 17\), expected a YAML text file/ },
];

describe('loadScenarioFile rejects malformed scenarios with one-line InputErrors', () => {
  it('has at least 30 cases', () => {
    expect(malformed.length).toBeGreaterThanOrEqual(30);
  });

  it.each(malformed.map((c) => [c.name, c] as const))('%s', (_name, c) => {
    const folder = writeFolder({ ...(c.files ?? {}), 'scenario.yaml': c.bytes ?? c.yaml ?? '' });
    const file = path.join(folder, 'scenario.yaml');
    let thrown: unknown;
    try {
      loadScenarioFile(file, c.overrides);
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(InputError);
    const message = (thrown as Error).message;
    expect(message).toMatch(c.message);
    expect(message).not.toContain('\n');
    // The trace file names itself; everything else names the scenario file.
    expect(message.startsWith(file) || message.startsWith('orders.csv') || message.includes(`${path.sep}orders.csv`)).toBe(true);
  });

  it('names a missing scenario file', () => {
    expect(() => loadScenarioFile(path.join(root, 'nope.yaml'))).toThrow(/nope\.yaml: cannot read the scenario file \(ENOENT\)/);
  });

  it('rejects text with a NUL character given directly', () => {
    expect(() => parseScenarioText('name: a\u0000b\n', null)).toThrow(/^scenario: got binary data \(a NUL character at line 1\)/);
  });

  it('rejects --rate together with --trace', () => {
    expect(() => parseScenarioText(scenario(), null, { tasksPerHour: 5, trace: 'x.csv' })).toThrow(/--rate and --trace: got both/);
  });
});

describe('loadScenarioFile accepts valid scenarios', () => {
  it('fills the defaults of DESIGN §3 for a minimal scenario', () => {
    const yaml = ['layout: ' + blockLayout(hall), 'fleet: { robots: 1 }', 'demand: { kind: saturated }', ''].join('\n');
    const folder = writeFolder({ 'minimal-hall.yaml': yaml });
    const loaded = loadScenarioFile(path.join(folder, 'minimal-hall.yaml'));
    expect(loaded.name).toBe('minimal-hall');
    expect(loaded.sourcePath).toBe(path.join(folder, 'minimal-hall.yaml'));
    expect(loaded.units).toEqual({ cellMeters: 1, robotSpeedMps: 1 });
    expect(loaded.handling).toEqual({ pickupSeconds: { dist: 'fixed', seconds: 0 }, dropSeconds: { dist: 'fixed', seconds: 0 } });
    expect(loaded.fleet).toEqual({ robots: 1 });
    expect(loaded.demand).toEqual({ kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } });
    expect(loaded.policy).toEqual({ name: 'token-passing', options: {} });
    // The defaults as documented (DESIGN §3 example and README "Scenario file"), written out
    // rather than compared with the code's own defaultRun constant.
    expect(loaded.run).toEqual({ hours: 4, warmup: 'auto', replications: 5, seed: 1, confidence: 0.95, sampleSeconds: 60, deadlockSeconds: 120, recoverySeconds: 300 });
    expect(loaded.layoutText.split('\n').slice(0, 2)).toEqual(hall.slice(0, 2));
  });

  it('loads the example of DESIGN §3 with its values', () => {
    const yaml = [
      'name: Demo parcel hall',
      'units: { cellMeters: 1.5, robotSpeedMps: 2.0 }',
      'layout: ' + blockLayout(hall),
      'handling:',
      '  pickupSeconds: 4',
      '  dropSeconds: { dist: exponential, mean: 3 }',
      'fleet: { robots: 2 }',
      'demand:',
      '  kind: poisson',
      '  tasksPerHour: 600',
      '  profile: [1.0, 1.4, 0.8]',
      "  pickups: { weights: { '1:1': 2 } }",
      '  drops: { skew: 0.8 }',
      'policy: { name: flow-batch, epochSeconds: 5 }',
      'run: { hours: 2, warmup: 0.5, replications: 5, seed: 1, confidence: 0.9, recoverySeconds: 0 }',
      '',
    ].join('\n');
    const loaded = parseScenarioText(yaml, null);
    expect(loaded.name).toBe('Demo parcel hall');
    expect(loaded.sourcePath).toBeNull();
    expect(loaded.units).toEqual({ cellMeters: 1.5, robotSpeedMps: 2 });
    expect(loaded.handling.dropSeconds).toEqual({ dist: 'exponential', mean: 3 });
    expect(loaded.demand).toEqual({
      kind: 'poisson',
      mode: 'delivery',
      tasksPerHour: 600,
      profile: [1, 1.4, 0.8],
      pickups: { kind: 'weights', weights: new Map([[1 * 9 + 1, 2]]) },
      drops: { kind: 'zipf', skew: 0.8 },
    });
    expect(loaded.policy).toEqual({ name: 'flow-batch', options: { epochSeconds: 5 } });
    expect(loaded.run).toEqual({ hours: 2, warmup: 0.5, replications: 5, seed: 1, confidence: 0.9, sampleSeconds: 60, deadlockSeconds: 120, recoverySeconds: 0 });
  });

  it('accepts round-trip demand with weights on storage points', () => {
    const layout = blockLayout(['#######', '#S.S.D#', '#H....#', '#######']);
    const loaded = parseScenarioText(scenario({ layout, demand: "{ kind: saturated, mode: round-trip, pickups: { weights: { '3:1': 1 } } }" }), null);
    expect(loaded.demand).toMatchObject({ kind: 'saturated', mode: 'round-trip', pickups: { kind: 'weights', weights: new Map([[1 * 7 + 3, 1]]) } });
  });

  it('resolves a relative trace path against the scenario folder and sorts rows by release, stably', () => {
    const folder = writeFolder({
      'site/scenario.yaml': scenario({ demand: '{ kind: trace, trace: data/orders.csv }' }),
      'site/data/orders.csv': 'releaseSeconds,pickup,drop,orderId\n30,1:1,7:2,a\n10,1:1,7:1,b\n\n10,1:1,7:2,c\n',
    });
    const loaded = loadScenarioFile(path.join(folder, 'site', 'scenario.yaml'));
    expect(loaded.demand.kind).toBe('trace');
    if (loaded.demand.kind !== 'trace') return;
    expect(loaded.demand.tracePath).toBe(path.join(folder, 'site', 'data', 'orders.csv'));
    expect(loaded.demand.tasks).toEqual([
      { releaseSeconds: 10, pickup: 10, drop: 16 },
      { releaseSeconds: 10, pickup: 10, drop: 25 },
      { releaseSeconds: 30, pickup: 10, drop: 25 },
    ]);
  });

  it('lets overrides win over file values', () => {
    const yaml = scenario({ demand: '{ kind: saturated, drops: { skew: 1.2 } }', policy: '{ name: token-passing, horizon: 3 }' });
    const loaded = parseScenarioText(yaml, null, { robots: 5, policy: 'pibt', hours: 2, replications: 9, seed: 42, warmup: 0.25, tasksPerHour: 120 });
    expect(loaded.fleet.robots).toBe(5);
    // The file's options belong to the file's policy, not to the one chosen on the command line.
    expect(loaded.policy).toEqual({ name: 'pibt', options: {} });
    expect(loaded.run).toMatchObject({ hours: 2, replications: 9, seed: 42, warmup: 0.25 });
    // --rate turns saturated demand into Poisson demand and keeps the file's drop choice.
    expect(loaded.demand).toEqual({ kind: 'poisson', mode: 'delivery', tasksPerHour: 120, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'zipf', skew: 1.2 } });
  });

  it('keeps policy options when --policy names the file policy', () => {
    const loaded = parseScenarioText(scenario({ policy: '{ name: pibt, horizon: 3 }' }), null, { policy: 'pibt' });
    expect(loaded.policy).toEqual({ name: 'pibt', options: { horizon: 3 } });
  });

  it('reads --trace relative to the current directory, not the scenario folder', () => {
    const folder = writeFolder({
      'scenario.yaml': scenario(),
      'elsewhere/orders.csv': 'releaseSeconds,pickup,drop\n5,1:1,7:1\n',
    });
    const trace = path.relative(process.cwd(), path.join(folder, 'elsewhere', 'orders.csv'));
    const loaded = loadScenarioFile(path.join(folder, 'scenario.yaml'), { trace });
    expect(loaded.demand).toMatchObject({ kind: 'trace', tracePath: path.join(folder, 'elsewhere', 'orders.csv'), tasks: [{ releaseSeconds: 5, pickup: 10, drop: 16 }] });
  });

  it('reports the YAML line of a field deep in the file', () => {
    const yaml = [
      'name: Deep',
      'layout: ' + blockLayout(hall),
      'fleet:',
      '  robots: 2',
      'demand:',
      '  kind: poisson',
      '  tasksPerHour: 60',
      'run:',
      '  hours: 4',
      '  replications: 3',
      '  seed: 1',
      '  confidence: 95',
      '',
    ].join('\n');
    expect(yaml.split('\n')[17 - 1]).toBe('  confidence: 95');
    expect(() => parseScenarioText(yaml, 'deep.yaml')).toThrow('deep.yaml: run.confidence (line 17): got 95, expected a number between 0 and 1 (exclusive), e.g. 0.95');
  });

  it('reports an unknown key before the missing field it was meant to be', () => {
    expect(() => parseScenarioText(scenario({ fleet: '{ robot: 2 }' }), null)).toThrow(/fleet\.robot \(line 9\): got unknown key "robot", expected one of robots/);
  });
});
