/**
 * The command-line contract of DESIGN §3 and §7, tested through the real program: each test
 * spawns `node bin/fleetwright.js ...` from the repository root (no build, tsx registers
 * itself), as a user or a script would, and checks stdout, stderr and the exit code
 * (0 ok, 1 run failed, 2 bad input). Runs are kept short (0.25-0.5 h, 2-3 replications).
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { policies } from '../policies/registry.ts';

const repositoryRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const demo = 'scenarios/demo-sortation.yaml';
const smallHall = 'test/fixtures/cli-small-hall.yaml';
const deadEndParking = 'test/fixtures/cli-dead-end-parking.yaml';
const smallHallText = readFileSync(path.join(repositoryRoot, smallHall), 'utf8');

const temporaryRoot = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-cli-'));
afterAll(() => rmSync(temporaryRoot, { recursive: true, force: true }));
let folderCount = 0;

/** A fresh folder under the temporary root. */
function freshFolder(): string {
  const folder = path.join(temporaryRoot, `case-${++folderCount}`);
  mkdirSync(folder, { recursive: true });
  return folder;
}

interface CliResult {
  status: number | null;
  stdout: string;
  stderr: string;
}

/** Runs the CLI as a user would; stdout and stderr are pipes, so no progress bar is drawn. */
function fleetwright(...args: string[]): CliResult {
  const env = { ...process.env };
  delete env.FLEETWRIGHT_DEBUG; // the debug switch prints stacks on purpose
  const result = spawnSync(process.execPath, ['bin/fleetwright.js', ...args], { cwd: repositoryRoot, encoding: 'utf8', env, timeout: 60_000 });
  if (result.error) throw result.error;
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

/** The JSON a command printed, with the exit code and stderr in the message when it is not clean. */
function jsonOf(result: CliResult): any {
  expect(result.stderr, 'stderr of a --json command').toBe('');
  expect(result.status, result.stderr).toBe(0);
  return JSON.parse(result.stdout);
}

/** The small-hall fixture with one piece of text replaced; fails if the piece is not there (the case would test nothing). */
function smallHallWith(from: string, to: string): string {
  if (!smallHallText.includes(from)) throw new Error(`fixture has no ${JSON.stringify(from)}`);
  return smallHallText.replace(from, to);
}

/** `run --json` output without the wall-clock block, the only part allowed to differ between identical runs. */
function withoutTiming(stdout: string): string {
  const stripped = stdout.replace(/\n {2}"timing": \{[^}]*\}/, '');
  expect(stripped).not.toBe(stdout);
  return stripped;
}

/** An interval of the contract; its ends are mean ∓ half-width clipped to [lower, upper] (README, "What the outputs mean"). */
function expectInterval(value: unknown, n: number, lower = 0, upper = Infinity): void {
  expect(value).toBeTypeOf('object');
  const interval = value as Record<string, unknown>;
  expect(Object.keys(interval).sort()).toEqual(['halfWidth', 'high', 'low', 'mean', 'n']);
  expect(interval.n).toBe(n);
  const { mean, halfWidth, low, high } = interval as { mean: number; halfWidth: number; low: number; high: number };
  for (const number of [mean, halfWidth, low, high]) expect(Number.isFinite(number)).toBe(true);
  expect(halfWidth).toBeGreaterThanOrEqual(0);
  expect(low).toBeCloseTo(Math.max(lower, mean - halfWidth), 9);
  expect(high).toBeCloseTo(Math.min(upper, mean + halfWidth), 9);
}

describe('run --json (DESIGN §7)', () => {
  // The demo hall with a small fleet: 6 robots, 2 replications of a quarter hour; one seed
  // twice and another once, shared by the tests below.
  const args = ['run', demo, '--robots', '6', '--hours', '0.25', '--reps', '2', '--json'];
  let result: CliResult;
  let again: CliResult;
  let otherSeed: CliResult;
  beforeAll(() => {
    result = fleetwright(...args, '--seed', '7');
    again = fleetwright(...args, '--seed', '7');
    otherSeed = fleetwright(...args, '--seed', '8');
  });

  it('prints exactly one JSON document with every contract field, zero collisions, exit 0', () => {
    const summary = jsonOf(result);
    expect(result.stdout.trim().startsWith('{')).toBe(true);
    expect(result.stdout.trim().endsWith('}')).toBe(true);

    expect(summary).toMatchObject({
      scenario: 'Demo parcel hall',
      policy: 'token-passing',
      robots: 6,
      replications: 2,
      hours: 0.25,
      seed: 7,
      confidence: 0.95,
      tickSeconds: 1,
    });
    for (const field of ['throughputPerHour', 'tasksInSystem', 'deadlocks']) expectInterval(summary[field], 2);
    for (const field of ['stationIdleFraction', 'stationStarvedFraction']) expectInterval(summary[field], 2, 0, 1);
    expect(Object.keys(summary.robotTime).sort()).toEqual(['empty', 'handling', 'loaded', 'parked', 'waiting']);
    for (const part of Object.values(summary.robotTime)) expectInterval(part, 2, 0, 1);
    expect(summary.throughputPerHour.mean).toBeGreaterThan(0);
    // 6 robots cannot keep up with the demo's 900 tasks/h: the backlog grows, so lead times
    // count the open tasks' ages and have no interval.
    expect(summary.throughputPerHour.mean).toBeLessThan(900 * 0.75);
    expect(summary.stable).toBe(false);
    expectInterval(summary.backlogGrowthPerHour, 2, -Infinity, Infinity);
    expect(summary.backlogGrowthPerHour.mean).toBeGreaterThan(0);
    expect(summary.leadTimeIncludesOpenTasks).toBe(true);
    expect(summary.leadTimeSeconds).toMatchObject({ halfWidth: null, low: null, high: null, n: 2 });
    expect(summary.leadTimeSeconds.mean).toBeGreaterThan(0);

    expect(Number.isInteger(summary.collisions)).toBe(true);
    expect(summary.collisions).toBe(0);
    const { released, delivered, open } = summary.tasks;
    for (const count of [released, delivered, open]) expect(Number.isInteger(count)).toBe(true);
    expect(delivered).toBeGreaterThan(0);
    expect(delivered).toBeLessThanOrEqual(released);
    // Poisson arrivals at 900/h over 2 x 0.25 h: count mean 450, variance 450 (a Poisson
    // count's variance equals its mean), standard deviation 21.2; 5 standard deviations either side.
    expect(released).toBeGreaterThan(450 - 5 * 21.2);
    expect(released).toBeLessThan(450 + 5 * 21.2);

    expect(summary.warmupSeconds).toBeGreaterThanOrEqual(0);
    expect(summary.warmupSeconds).toBeLessThan(0.25 * 3600);
    expect(Number.isInteger(summary.agentSteps)).toBe(true);
    expect(summary.agentSteps).toBeGreaterThan(0);
    expect(summary.timing.wallSeconds).toBeGreaterThan(0);
    expect(summary.timing.agentStepsPerSecond).toBeGreaterThan(0);
  });

  it('is deterministic: the same seed gives byte-identical JSON outside timing, another seed another throughput', () => {
    for (const run of [result, again, otherSeed]) expect(run.status, run.stderr).toBe(0);
    expect(withoutTiming(again.stdout)).toBe(withoutTiming(result.stdout));
    expect(JSON.parse(otherSeed.stdout).seed).toBe(8);
    expect(JSON.parse(otherSeed.stdout).throughputPerHour.mean).not.toBe(JSON.parse(result.stdout).throughputPerHour.mean);
  });
});

describe('run --out', () => {
  it('writes summary.json, the CSV files and the report inputs, and a later bad-input run into the same folder exits 2 and leaves them byte-identical', () => {
    const out = path.join(freshFolder(), 'results');
    const result = fleetwright('run', demo, '--robots', '6', '--hours', '0.25', '--reps', '2', '--seed', '5', '--json', '--out', out);
    expect(result.status, result.stderr).toBe(0);
    const names = ['cells.csv', 'context.json', 'lead-time-split.csv', 'lead-times.csv', 'replications.csv', 'stations.csv', 'summary.json', 'throughput.csv'];
    expect(readdirSync(out).sort()).toEqual(names);

    const files = Object.fromEntries(names.map((name) => [name, readFileSync(path.join(out, name), 'utf8')]));
    expect(files['summary.json']).toBe(result.stdout);
    const lines = (name: string): string[] => files[name].trimEnd().split('\n');
    // Header plus one row per replication.
    expect(lines('replications.csv')).toHaveLength(1 + 2);
    expect(lines('replications.csv')[0]).toMatch(/^replication,throughputPerHour,/);
    const header = lines('replications.csv')[0].split(',');
    for (const column of ['stable', 'backlogGrowthPerHour', 'backlogGrowthLow', 'backlogGrowthHigh', 'deadlocks']) expect(header).toContain(column);
    const stableColumn = header.indexOf('stable');
    for (const row of lines('replications.csv').slice(1)) expect(['true', 'false']).toContain(row.split(',')[stableColumn]);
    // 0.25 h in 60 s samples: 15 rows per replication.
    expect(lines('throughput.csv')).toHaveLength(1 + 2 * 15);
    // One row per station: 8 pickups and 40 drops.
    expect(lines('stations.csv')).toHaveLength(1 + 48);
    expect(lines('stations.csv')[0]).toBe('cell,kind,idleFraction,starvedFraction,group,utilisation,noRobotFraction,travellingFraction,queueSecondsPerHour,tasksReleased,tasksServed');
    // One row per cell of the 40 x 20 demo hall, walls included.
    expect(lines('cells.csv')).toHaveLength(1 + 40 * 20);
    expect(lines('cells.csv')[0]).toBe('x,y,kind,waitingSecondsPerHour');
    expect(JSON.parse(files['context.json']).command).toBe(`fleetwright run ${demo} --robots 6 --hours 0.25 --reps 2 --seed 5 --json --out ${out}`);

    const failed = fleetwright('run', demo, '--robots', '0', '--hours', '0.25', '--reps', '2', '--json', '--out', out);
    expect(failed.status).toBe(2);
    expect(failed.stdout).toBe('');
    expect(failed.stderr).toMatch(/--robots: got 0/);
    expect(readdirSync(out).sort()).toEqual(names);
    for (const name of names) expect(readFileSync(path.join(out, name), 'utf8'), name).toBe(files[name]);
  });
});

interface BadInputCase {
  name: string;
  /** Scenario text or bytes, written to scenario.yaml in a fresh folder; SCENARIO in args stands for its path. */
  scenario?: string | Buffer;
  /** Other files written beside the scenario; DIR in args stands for the folder. */
  files?: Record<string, string>;
  args: string[];
  message: RegExp;
}

const runHall = (...options: string[]): string[] => ['run', smallHall, ...options];
const runScenario = (...options: string[]): string[] => ['run', 'SCENARIO', ...options];

const badInputCases: BadInputCase[] = [
  { name: 'ragged layout', scenario: smallHallWith('#P.....D#', '#P.....D'), args: runScenario(), message: /layout \(line 6\): row 2 has 8 cells, expected 9/ },
  { name: 'unknown layout character', scenario: smallHallWith('#H......#', '#H..X...#'), args: runScenario(), message: /layout \(line 8\): row 4 column 5 has "X"/ },
  { name: 'no pickup point', scenario: smallHallWith('#P.....D#', '#......D#'), args: runScenario(), message: /layout.*no pickup point \(P\)/ },
  {
    name: 'unreachable drop',
    scenario: smallHallWith('#P.....D#\n  #H.....D#\n  #H......#', '#P.....##\n  #H....#D#\n  #H....###'),
    args: runScenario(),
    message: /drop 7:2 that cannot be reached/,
  },
  { name: '--robots 0', args: runHall('--robots', '0'), message: /--robots: got 0, expected a positive integer/ },
  { name: '--robots -1', args: runHall('--robots', '-1'), message: /--robots: got -1, expected a positive integer/ },
  { name: '--robots 1.5', args: runHall('--robots', '1.5'), message: /--robots: got 1\.5, expected a positive integer/ },
  { name: '--robots ten', args: runHall('--robots', 'ten'), message: /--robots: got .*, expected a positive integer/ },
  { name: '--robots more than passable cells', args: runHall('--robots', '22'), message: /--robots: got 22, expected at most 21/ },
  { name: 'fleet.robots more than passable cells', scenario: smallHallWith('robots: 2', 'robots: 99'), args: runScenario(), message: /fleet\.robots \(line 11\): got 99, expected at most 21/ },
  { name: 'fleet.robots as text', scenario: smallHallWith('robots: 2', 'robots: ten'), args: runScenario(), message: /fleet\.robots \(line 11\): got "ten"/ },
  { name: '--rate -5', args: runHall('--rate', '-5'), message: /--rate: got -5, expected tasks per hour > 0/ },
  { name: '--rate abc', args: runHall('--rate', 'abc'), message: /--rate: got "abc", expected tasks per hour > 0/ },
  { name: 'tasksPerHour .inf', scenario: smallHallWith('tasksPerHour: 300', 'tasksPerHour: .inf'), args: runScenario(), message: /demand\.tasksPerHour \(line 12\): got Infinity/ },
  { name: 'tasksPerHour .nan', scenario: smallHallWith('tasksPerHour: 300', 'tasksPerHour: .nan'), args: runScenario(), message: /demand\.tasksPerHour \(line 12\): got NaN/ },
  { name: '--policy nope', args: runHall('--policy', 'nope'), message: /got "nope", expected one of token-passing/ },
  { name: 'unknown demand kind', scenario: smallHallWith('kind: poisson', 'kind: bursty'), args: runScenario(), message: /demand\.kind \(line 12\): got "bursty", expected poisson, saturated or trace/ },
  { name: 'unknown top-level key', scenario: `${smallHallText}colour: blue\n`, args: runScenario(), message: /colour \(line 15\): got unknown key "colour"/ },
  { name: 'bad YAML', scenario: smallHallWith('fleet: { robots: 2 }', 'fleet: { robots: 2'), args: runScenario(), message: /invalid YAML/ },
  { name: 'empty file', scenario: '', args: runScenario(), message: /got an empty file/ },
  { name: 'binary garbage', scenario: Buffer.from(Array.from({ length: 512 }, (_, i) => (i * 37) % 256)), args: runScenario(), message: /got binary data/ },
  { name: 'missing trace file (--trace)', args: runHall('--trace', 'no-such-trace.csv'), message: /--trace: got "no-such-trace\.csv", expected a readable CSV trace file \(no such file/ },
  {
    name: 'missing trace file (demand.trace)',
    scenario: smallHallWith('{ kind: poisson, tasksPerHour: 300 }', '{ kind: trace, trace: orders.csv }'),
    args: runScenario(),
    message: /demand\.trace \(line 12\): got "orders\.csv", expected a readable CSV trace file/,
  },
  {
    name: 'trace row naming a drop as its pickup',
    scenario: smallHallWith('{ kind: poisson, tasksPerHour: 300 }', '{ kind: trace, trace: orders.csv }'),
    files: { 'orders.csv': 'releaseSeconds,pickup,drop\n10,7:1,7:2\n' },
    args: runScenario(),
    message: /orders\.csv: row 1 \(line 2\) pickup: got "7:1"/,
  },
  { name: '--rate and --trace together', args: runHall('--rate', '60', '--trace', 'orders.csv'), message: /--rate and --trace: got both/ },
  { name: 'warm-up longer than the run (--warmup 5 --hours 1)', args: runHall('--warmup', '5', '--hours', '1'), message: /--warmup: got 5, expected .*< run\.hours \(1\)/ },
  { name: 'run.warmup longer than run.hours', scenario: smallHallWith('seed: 3', 'seed: 3, warmup: 1'), args: runScenario(), message: /run\.warmup \(line 14\): got 1/ },
  {
    name: 'bad policy option (maxExpansions: -3)',
    scenario: smallHallWith('policy: { name: token-passing }', 'policy: { name: token-passing, maxExpansions: -3 }'),
    args: runScenario(),
    message: /policy\.maxExpansions: .*-3/,
  },
  { name: 'missing scenario file', args: ['run', 'no/such/scenario.yaml'], message: /no\/such\/scenario\.yaml: cannot read the scenario file \(ENOENT\)/ },
  { name: 'unknown CLI option (--frobnicate)', args: runHall('--frobnicate'), message: /unknown option '--frobnicate'/ },
  { name: 'misspelt CLI option (--robotz)', args: runHall('--robotz', '3'), message: /unknown option '--robotz'.*--robots/ },
  { name: '--out under a file', files: { 'a-file': 'x' }, args: runHall('--out', 'DIR/a-file/results'), message: /--out: cannot create folder .*ENOTDIR/ },
  { name: 'compare with one policy', args: ['compare', smallHall, '--policies', 'token-passing'], message: /--policies: got "token-passing", expected at least two/ },
  { name: 'compare --reps 1', args: ['compare', smallHall, '--policies', 'token-passing,token-passing-swaps', '--reps', '1'], message: /--reps: got 1, expected at least 2/ },
  { name: 'check on a ragged layout', scenario: smallHallWith('#P.....D#', '#P.....D'), args: ['check', 'SCENARIO', '--json'], message: /layout \(line 6\): row 2 has 8 cells/ },
];

describe('bad input exits 2 with one line on stderr (DESIGN §3, §7)', () => {
  it('covers at least 25 malformed scenarios and options', () => {
    expect(badInputCases.length).toBeGreaterThanOrEqual(25);
  });

  it.each(badInputCases)('$name', (badInput) => {
    const folder = freshFolder();
    const scenarioPath = path.join(folder, 'scenario.yaml');
    if (badInput.scenario !== undefined) writeFileSync(scenarioPath, badInput.scenario);
    for (const [name, content] of Object.entries(badInput.files ?? {})) writeFileSync(path.join(folder, name), content);
    const args = badInput.args.map((arg) => arg.replace('SCENARIO', scenarioPath).replace('DIR', folder));

    const result = fleetwright(...args);
    expect(result.stdout).toBe('');
    expect(result.stderr).not.toContain('    at ');
    expect(result.stderr).toMatch(/^fleetwright: error: [^\n]+\n$/);
    expect(result.stderr.length).toBeLessThan(300);
    expect(result.stderr).toMatch(badInput.message);
    expect(result.status).toBe(2);
  });
});

describe('check', () => {
  it('check --json on the demo hall: 40 x 20, 8 pickups, 40 drops, connected and well-formed', () => {
    const report = jsonOf(fleetwright('check', demo, '--json'));
    expect(Object.keys(report).sort()).toEqual(
      ['connected', 'drops', 'floorCells', 'height', 'parking', 'pickups', 'storage', 'wellFormed', 'wellFormedViolation', 'width', 'restCells', 'restCellsNote', 'robotsHeld', 'restCellsUsed', 'wellFormedWithRestCells'].sort(),
    );
    expect(report).toMatchObject({ width: 40, height: 20, pickups: 8, drops: 40, storage: 0, connected: true, wellFormed: true, wellFormedViolation: null });
    // Counted by hand from the layout: 38 travelable columns x 18 rows, less 20 islands of 2 walls.
    expect(report.floorCells).toBe(38 * 18 - 40);
    // 10 + 10 spots along the north and south aisles, 18 along the east wall.
    expect(report.parking).toBe(38);
    // 24 robots fit on the marked spots: no rest cell needed.
    expect(report.restCellsUsed).toBe(0);
  });

  it('check --robots N: past the parking count the floor holds robotsHeld robots with rest cells, and one more breaks it', () => {
    const at100 = jsonOf(fleetwright('check', demo, '--json', '--robots', '100'));
    expect(at100).toMatchObject({ wellFormed: false, wellFormedWithRestCells: true, restCellsUsed: 62, restCellsNote: null });
    expect(at100.robotsHeld).toBeGreaterThanOrEqual(200);
    const held = jsonOf(fleetwright('check', demo, '--json', '--robots', String(at100.robotsHeld)));
    expect(held).toMatchObject({ wellFormed: false, wellFormedWithRestCells: true, restCellsUsed: at100.robotsHeld - 38 });
    const over = jsonOf(fleetwright('check', demo, '--json', '--robots', String(at100.robotsHeld + 1)));
    expect(over.wellFormedWithRestCells).toBe(false);
    const human = fleetwright('check', demo, '--robots', '100');
    expect(human.stdout).toMatch(/this fleet uses 62/);
    expect(human.stdout).toMatch(/well-formed with rest cells for 100 robots: yes/);
  });

  it('a parking spot reachable only through a pickup breaks well-formedness, and both endpoints are named', () => {
    const report = jsonOf(fleetwright('check', deadEndParking, '--json'));
    expect(report).toMatchObject({ width: 7, height: 5, floorCells: 13, pickups: 1, drops: 1, parking: 2, connected: true, wellFormed: false });
    expect(report.wellFormedViolation).toMatch(/1:1\b.*\b5:2\b/);

    const human = fleetwright('check', deadEndParking);
    expect(human.status, human.stderr).toBe(0);
    expect(human.stdout).toMatch(/well-formed.*: no: .*1:1\b.*\b5:2\b/);
    expect(human.stdout).toMatch(/connected: yes/);
    // Rest cells cannot repair it.
    expect(report).toMatchObject({ restCells: 0, wellFormedWithRestCells: false });
    expect(human.stdout).toMatch(/only guaranteed to finish every task on well-formed layouts/);
  });
});

describe('policies', () => {
  const registered = policies.map((p) => p.name);

  it('lists every registered policy, token-passing among them, on one line each', () => {
    expect(registered).toContain('token-passing');
    const result = fleetwright('policies');
    expect(result.status, result.stderr).toBe(0);
    const lines = result.stdout.split('\n');
    for (const name of registered) {
      const own = lines.filter((line) => line.startsWith(`${name} `));
      expect(own, name).toHaveLength(1);
      expect(own[0].slice(name.length).trim().length).toBeGreaterThan(10);
    }
  });

  it('policies --json is an array of {name, summary, source, options} in registry order', () => {
    const list = jsonOf(fleetwright('policies', '--json'));
    expect(Array.isArray(list)).toBe(true);
    expect(list.map((p: { name: string }) => p.name)).toEqual(registered);
    for (const policy of list) {
      expect(Object.keys(policy).sort()).toEqual(['name', 'options', 'source', 'summary']);
      expect(policy.summary).toMatch(/\w{3}/);
      expect(policy.source).toMatch(/\w{3}/);
      expect(Array.isArray(policy.options)).toBe(true);
    }
    const tokenPassing = list.find((p: { name: string }) => p.name === 'token-passing');
    expect(tokenPassing.source).toMatch(/Ma, Li, Kumar, Koenig, AAMAS 2017/);
    expect(tokenPassing.options.map((o: { name: string }) => o.name)).toContain('maxExpansions');
  });
});

describe('the demo as `npm start` runs it', () => {
  it('prints the table with throughput and the ISO 3691-4 safety note', () => {
    const result = fleetwright('run', demo, '--hours', '0.5', '--reps', '2');
    expect(result.status, result.stderr).toBe(0);
    expect(result.stderr).toBe('');
    expect(result.stdout).toContain('throughput (tasks/h)');
    expect(result.stdout).toMatch(/collisions 0\b/);
    expect(result.stdout).toMatch(/does not validate safety.*ISO 3691-4/);
  });
});

describe('a warm-up cut that leaves no delivery', () => {
  it('fails the run with exit 1 and says so', () => {
    const folder = freshFolder();
    // Three tasks in the first 20 s of the small hall, all delivered within a couple of minutes.
    writeFileSync(path.join(folder, 'orders.csv'), 'releaseSeconds,pickup,drop\n0,1:1,7:1\n10,1:1,7:2\n20,1:1,7:1\n');
    const result = fleetwright('run', smallHall, '--trace', path.join(folder, 'orders.csv'), '--hours', '0.25', '--warmup', '0.2', '--reps', '1', '--json');
    expect(result.status).toBe(1);
    expect(result.stderr).toMatch(/^fleetwright: run failed: policy token-passing: the warm-up cut of 0\.20 h \(fixed\) leaves no delivery to measure \(3 tasks delivered before it/);
    expect(result.stderr.trim().split('\n')).toHaveLength(1);
  });

  it('a trace is not cut automatically: the same trace with --warmup auto reports all three deliveries', () => {
    const folder = freshFolder();
    writeFileSync(path.join(folder, 'orders.csv'), 'releaseSeconds,pickup,drop\n0,1:1,7:1\n10,1:1,7:2\n20,1:1,7:1\n');
    const summary = jsonOf(fleetwright('run', smallHall, '--trace', path.join(folder, 'orders.csv'), '--hours', '0.25', '--reps', '1', '--json'));
    expect(summary.warmup).toMatchObject({ method: 'none', seconds: 0 });
    expect(summary.tasks.delivered).toBe(3);
  });
});

describe('compare --json (DESIGN §7)', () => {
  it('two policies on common random numbers: two summaries and a Bonferroni-adjusted difference per metric', () => {
    const result = fleetwright('compare', demo, '--policies', 'token-passing,token-passing-swaps', '--reps', '3', '--hours', '0.5', '--json');
    const document = JSON.parse(result.stdout);
    expect(Object.keys(document).sort()).toEqual(['differences', 'policies']);
    const [a, b] = document.policies;
    expect(document.policies).toHaveLength(2);
    expect([a.policy, b.policy]).toEqual(['token-passing', 'token-passing-swaps']);
    for (const summary of [a, b]) expect(summary).toMatchObject({ replications: 3, hours: 0.5, robots: 24 });
    // Common random numbers: both policies see the same task stream.
    expect(b.tasks.released).toBe(a.tasks.released);

    const metrics = ['throughputPerHour', 'leadTimeSeconds', 'leadTimeP95Seconds', 'stationStarvedFraction', 'deadlocks'];
    expect(document.differences.map((d: { metric: string }) => d.metric).sort()).toEqual([...metrics].sort());
    for (const difference of document.differences) {
      expect(difference).toMatchObject({ a: 'token-passing', b: 'token-passing-swaps', note: null });
      for (const key of ['mean', 'halfWidth', 'low', 'high']) expect(difference[key], `${difference.metric}.${key}`).toBeTypeOf('number');
      // One pair x 5 metrics reported together: Bonferroni gives 1 - 0.05 / 5 = 0.99 each.
      expect(difference.confidence).toBeCloseTo(0.99, 12);
      expect(difference.low).toBeCloseTo(difference.mean - difference.halfWidth, 9);
      expect(difference.high).toBeCloseTo(difference.mean + difference.halfWidth, 9);
    }
    // The mean paired difference is the difference of the means.
    const throughput = document.differences.find((d: { metric: string }) => d.metric === 'throughputPerHour');
    expect(throughput.mean).toBeCloseTo(a.throughputPerHour.mean - b.throughputPerHour.mean, 9);

    // Last, so that a defective policy still lets the shape checks above run.
    expect(a.collisions + b.collisions, 'collisions counted by the validator').toBe(0);
    expect(result.stderr).toBe('');
    expect(result.status).toBe(0);
  });
});
