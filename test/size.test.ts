/**
 * Fleet sizing (`size`, experiments/size.ts): Groover's hand formula against the textbook,
 * the search against an exactly known capacity curve, the recommendation on private lanes
 * (where the hand formula is exact), and the null answers with their reasons.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import seedrandom from 'seedrandom';
import { afterAll, describe, expect, it } from 'vitest';
import { grooverFleetSize, handFormulaFor } from '../experiments/hand-formula.ts';
import { searchFleetSize, type SizeFigures } from '../experiments/size-search.ts';
import { sizeFleet } from '../experiments/size.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { parseLayout } from '../sim/layout.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import type { Scenario } from '../sim/model.ts';
import { intervalOf } from '../reports/stats/index.ts';
import { privateLanePolicy } from './fixtures/private-lane-policy.ts';

const repositoryRoot = path.resolve(import.meta.dirname, '..');
const temporary = mkdtempSync(path.join(os.tmpdir(), 'fleetwright-size-'));
afterAll(() => rmSync(temporary, { recursive: true, force: true }));

function fleetwright(...args: string[]) {
  const result = spawnSync(process.execPath, ['bin/fleetwright.js', ...args], { cwd: repositoryRoot, encoding: 'utf8', timeout: 120_000 });
  if (result.error) throw result.error;
  return result;
}

describe('hand formula (Groover, ch. 10)', () => {
  it('reproduces the textbook problem: 40 deliveries/h, 250 ft loaded, 300 ft empty at 200 ft/min, 1.5 min handling', () => {
    // REFERENCES.md, recomputed from Groover's worked problem: Tc = 4.25 min, WL = 170 min/h.
    const minute = 60;
    const base = { deliveriesPerHour: 40, loadSeconds: 0.75 * minute, unloadSeconds: 0.75 * minute, loadedTravelSeconds: (250 / 200) * minute, emptyTravelSeconds: (300 / 200) * minute };
    const plain = grooverFleetSize(base);
    expect(plain.cycleSeconds / minute).toBeCloseTo(4.25, 12);
    expect(plain.workloadSecondsPerHour / minute).toBeCloseTo(170, 9);
    expect(plain.robotsExact).toBeCloseTo(170 / 60, 12);
    expect(plain.robots).toBe(3);
    // With the textbook's traffic factor Tf = 1 - 0.05 (n - 1) it takes 4 vehicles.
    expect(grooverFleetSize({ ...base, trafficFactor: (n) => 1 - 0.05 * (n - 1) }).robots).toBe(4);
  });

  it('takes mean distances from the layout: one pickup and one drop 6 cells apart give Tc = handling + 2 x 6 s', () => {
    const layout = '#########\n#P.....D#\n#H......#\n#########';
    const scenario = loadScenarioText(`layout: |\n  ${layout.split('\n').join('\n  ')}\nhandling: { pickupSeconds: 4, dropSeconds: { dist: uniform, min: 1, max: 3 } }\nfleet: { robots: 1 }\ndemand: { kind: poisson, tasksPerHour: 300 }\n`);
    const parsed = parseLayout(scenario.layoutText);
    const hand = handFormulaFor({ scenario, layout: parsed, distances: new DistanceTables(parsed), policy: privateLanePolicy, policyOptions: {} }, 300);
    // By hand: P at 1:1, D at 7:1, 6 cells apart; load 4 s, unload mean (1 + 3) / 2 = 2 s.
    expect(hand.loadedMeters).toBe(6);
    expect(hand.emptyMeters).toBe(6);
    expect(hand.cycleSeconds).toBe(4 + 6 + 2 + 6);
    expect(hand.robots).toBe(Math.ceil((300 * 18) / 3600));
    // The single pickup takes every task for 4 s: at most 900 tasks/h.
    expect(hand.stationLimit).toMatchObject({ cell: '1:1', kind: 'pickup', tasksPerHour: 900 });
  });
});

function loadScenarioText(text: string): Scenario {
  const file = path.join(temporary, `scenario-${Math.random().toString(36).slice(2)}.yaml`);
  writeFileSync(file, text);
  return loadScenarioFile(file);
}

describe('the search (experiments/size-search.ts)', () => {
  /**
   * A fleet whose capacity is exactly n x perRobot tasks/h (no congestion): at a target
   * below capacity it delivers the target, above it its capacity, with noise of a known
   * standard deviation. The right answer is ceil(target / perRobot), by the hand formula.
   */
  function exactFleet(perRobot: number, target: number, sd: number) {
    const calls: [number, number][] = [];
    const evaluate = async (robots: number, replications: number): Promise<SizeFigures> => {
      calls.push([robots, replications]);
      const capacity = robots * perRobot;
      const rng = seedrandom(`fleet-${robots}`);
      const values = Array.from({ length: replications }, () => Math.min(target, capacity) + sd * (rng() + rng() + rng() - 1.5) * 2);
      return {
        robots,
        replications,
        throughputPerHour: intervalOf(values, 0.95),
        stable: capacity > target,
        backlogGrowthPerHour: capacity > target ? { mean: 0, halfWidth: 1, low: -1, high: 1, n: replications } : { mean: target - capacity, halfWidth: 1, low: target - capacity - 1, high: target - capacity + 1, n: replications },
        materialGrowthPerHour: 0.01 * target,
        leadTimeP95Seconds: intervalOf(values.map(() => 60), 0.95),
      };
    };
    return { calls, evaluator: { evaluate } };
  }

  it.each([
    [75, 900, 13],
    [75, 901, 13],
    [60, 900, 16],
    [100, 250, 3],
  ])('per robot %d tasks/h, target %d: recommends ceil(target / per robot) = %d, whatever the start', async (perRobot, target, answer) => {
    for (const start of [1, answer - 2, answer, answer + 5]) {
      const { evaluator } = exactFleet(perRobot, target, 5);
      const result = await searchFleetSize({ evaluator, target, min: 1, max: 40, start: Math.max(1, start), replications: 5, maxReplications: 20, leadP95Limit: null });
      expect(result.recommended, `start ${start}`).toBe(answer);
      expect(result.evaluated.get(answer)?.verdict).toBe('meets');
      expect(result.evaluated.get(answer - 1)?.verdict ?? 'fails').not.toBe('meets');
    }
  });

  it('brackets then bisects: from a start of 1 with answer 16 it evaluates 1, 2, 4, 8, 16 and bisects 8..16, nothing twice', async () => {
    const { evaluator, calls } = exactFleet(60, 900, 5);
    await searchFleetSize({ evaluator, target: 900, min: 1, max: 40, start: 1, replications: 5, maxReplications: 20, leadP95Limit: null });
    const fleets = calls.map(([n]) => n);
    expect(fleets).toEqual([1, 2, 4, 8, 16, 12, 14, 15]);
  });

  it('gives more replications only where the backlog-growth interval straddles the material growth, doubling up to the cap, and then counts the fleet as not meeting', async () => {
    const calls: [number, number][] = [];
    const evaluator = {
      async evaluate(robots: number, replications: number): Promise<SizeFigures> {
        calls.push([robots, replications]);
        // Fleet 5 is on the edge: its growth interval (0.5 +- 1) reaches the material 1 task/h at any count;
        // fleet 6 narrows below it with 6 replications.
        const half = robots === 6 ? 4 / replications : 1;
        const mean = robots === 5 ? 0.5 : 0;
        return {
          robots,
          replications,
          throughputPerHour: { mean: 100, halfWidth: 1, low: 99, high: 101, n: replications },
          stable: robots >= 5,
          backlogGrowthPerHour: robots >= 5 ? { mean, halfWidth: half, low: mean - half, high: mean + half, n: replications } : { mean: 20, halfWidth: 1, low: 19, high: 21, n: replications },
          materialGrowthPerHour: 1,
          leadTimeP95Seconds: { mean: 10, halfWidth: 1, low: 9, high: 11, n: replications },
        };
      },
    };
    const result = await searchFleetSize({ evaluator, target: 100, min: 1, max: 10, start: 5, replications: 3, maxReplications: 12, leadP95Limit: null });
    expect(calls.filter(([n]) => n === 5).map(([, r]) => r)).toEqual([3, 6, 12]);
    expect(calls.filter(([n]) => n === 6).map(([, r]) => r)).toEqual([3, 6]);
    expect(calls.filter(([n]) => n !== 5 && n !== 6).every(([, r]) => r === 3)).toBe(true);
    expect(result.evaluated.get(5)?.verdict).toBe('undecided');
    expect(result.recommended).toBe(6);
  });

  it('a service level (--lead-p95) moves the answer to the smallest fleet whose p95 interval is within it', async () => {
    const evaluator = {
      async evaluate(robots: number, replications: number): Promise<SizeFigures> {
        const p95 = 400 / robots; // seconds, falls with the fleet
        return {
          robots,
          replications,
          throughputPerHour: { mean: 100, halfWidth: 1, low: 99, high: 101, n: replications },
          stable: robots >= 2,
          backlogGrowthPerHour: { mean: 0, halfWidth: 0.1, low: -0.1, high: 0.1, n: replications },
          materialGrowthPerHour: 1,
          leadTimeP95Seconds: { mean: p95, halfWidth: 2, low: p95 - 2, high: p95 + 2, n: replications },
        };
      },
    };
    // p95 + 2 <= 50 from robots = 9 (400 / 9 = 44.4); at 8 it is 50 +- 2: unsure at every replication count.
    const result = await searchFleetSize({ evaluator, target: 100, min: 1, max: 20, start: 2, replications: 3, maxReplications: 6, leadP95Limit: 50 });
    expect(result.recommended).toBe(9);
    expect(result.evaluated.get(8)?.verdict).toBe('undecided');
  });
});

describe('size on private lanes (each robot its own pickup and drop: no congestion)', () => {
  // Four lanes, each with its parking spot, pickup and drop 9 cells apart; a connecting
  // column on the left keeps the floor one connected area. Every task stays in its lane
  // (a trace), and each robot serves the lane it parks in.
  const layout = ['##############', '#.HP........D#', '#.############', '#.HP........D#', '#.############', '#.HP........D#', '#.############', '#.HP........D#', '##############'];
  const lanes = [1, 3, 5, 7];

  it('recommends what the hand formula says', async () => {
    // Poisson arrivals per lane (130 tasks/h each), 5 hours of them.
    const rng = seedrandom('private-lanes');
    const rows: [number, string, string][] = [];
    for (const y of lanes) {
      for (let t = -Math.log(1 - rng()) * (3600 / 130); t < 5 * 3600; t += -Math.log(1 - rng()) * (3600 / 130)) rows.push([t, `3:${y}`, `12:${y}`]);
    }
    rows.sort((a, b) => a[0] - b[0]);
    const trace = path.join(temporary, 'lanes.csv');
    writeFileSync(trace, `releaseSeconds,pickup,drop\n${rows.map((r) => `${r[0].toFixed(3)},${r[1]},${r[2]}`).join('\n')}\n`);
    const scenario = loadScenarioText(
      `layout: |\n  ${layout.join('\n  ')}\nhandling: { pickupSeconds: 3, dropSeconds: 3 }\nfleet: { robots: 4 }\ndemand: { kind: trace, trace: ${JSON.stringify(trace)} }\nrun: { hours: 4, replications: 3, seed: 2, warmup: 0.25 }\n`,
    );
    const target = 520;
    const document = await sizeFleet(scenario, {
      target,
      replications: 3,
      leadP95Limit: null,
      workers: 1,
      prepare: (s) => {
        const parsed = parseLayout(s.layoutText);
        return { scenario: s, layout: parsed, distances: new DistanceTables(parsed), policy: privateLanePolicy, policyOptions: {} };
      },
    });
    // By hand: Tc = 3 s load + 9 s loaded + 3 s unload + 9 s empty = 24 s, so a robot
    // delivers 150 tasks/h and 520 tasks/h need ceil(520 x 24 / 3600) = ceil(3.47) = 4.
    expect(document.handFormula.cycleSeconds).toBeCloseTo(24, 9);
    expect(document.handFormulaRobots).toBe(4);
    expect(document.recommendedRobots).toBe(4);
    expect(document.reason).toBeNull();
    // Three robots leave a lane unserved: a quarter of the work is never done.
    const three = document.curve.find((c) => c.robots === 3)!;
    expect(three.verdict).not.toBe('meets');
    expect(three.throughputPerHour.mean).toBeLessThan(0.8 * target);
    // Four robots keep up: they deliver what the trace offers in the measured window (the
    // trace is scaled to the target over its whole length, so the window's share differs a little).
    const four = document.curve.find((c) => c.robots === 4)!;
    expect(four.verdict).toBe('meets');
    expect(Math.abs(four.offeredPerHour / target - 1)).toBeLessThan(0.05);
    expect(four.throughputPerHour.mean).toBeGreaterThan(0.99 * four.offeredPerHour);
    // A trace pairs pickups with drops: saturated demand cannot keep that, so no capacity.
    expect(document.capacity).toBeNull();
  });
});

describe('size with no answer in range: null with the reason (exit 0)', () => {
  it('a floor whose capacity is below the target at every fleet size', () => {
    // The small hall has one pickup point (4 s per task, so at most 900 tasks/h there) and
    // two parking spots: token passing jams as the fleet grows, far below 880 tasks/h.
    const result = fleetwright('size', 'test/fixtures/cli-small-hall.yaml', '--target', '880', '--reps', '2', '--workers', '1', '--json');
    expect(result.stderr).toBe('');
    expect(result.status).toBe(0);
    const document = JSON.parse(result.stdout);
    expect(document.recommendedRobots).toBeNull();
    expect(document.reason).toMatch(/^no fleet from \d+ to \d+ robots meets 880 tasks\/h; the closest, \d+ robots, delivers/);
    expect(document.curve.length).toBeGreaterThan(1);
    for (const point of document.curve) expect(point.throughputPerHour.high ?? point.throughputPerHour.mean).toBeLessThan(880);
    expect(document).toHaveProperty('handFormulaRobots');
    expect(document).toHaveProperty('knee');
  });

  it('a target beyond what the busiest station can handle is refused without running a fleet', () => {
    const out = path.join(temporary, 'station-limit');
    const result = fleetwright('size', 'test/fixtures/cli-small-hall.yaml', '--target', '1000', '--json', '--out', out);
    // --out holds the same document, and the context the HTML report reads.
    expect(readFileSync(path.join(out, 'size.json'), 'utf8')).toBe(result.stdout);
    expect(JSON.parse(readFileSync(path.join(out, 'context.json'), 'utf8')).command).toMatch(/^fleetwright size /);
    expect(result.status).toBe(0);
    const document = JSON.parse(result.stdout);
    expect(document.recommendedRobots).toBeNull();
    // By hand: the one pickup point takes every task for 4 s: 3600 / 4 = 900 tasks/h.
    expect(document.reason).toMatch(/pickup point 1:1 .* at most 900 tasks\/h, not the target 1000/);
    expect(document.curve).toEqual([]);
  });
});

describe('size: bad options exit 2 with one line', () => {
  it.each([
    [['--target', 'abc'], /--target: got "abc", expected tasks per hour > 0/],
    [['--target', '900', '--min', '30', '--max', '20'], /--min: got 30, expected at most --max \(20\)/],
    [['--target', '900', '--confidence', '2'], /--confidence: got 2, expected a number between 0 and 1/],
    [['--target', '900', '--lead-p95', '-1'], /--lead-p95: got "-1", expected a number of seconds > 0/],
    [['--target', '1e9'], /--target: got 1000000000, expected a rate that releases at most 10,000,000 tasks/],
  ])('%j', (args, message) => {
    const result = fleetwright('size', 'scenarios/demo-sortation.yaml', ...(args as string[]));
    expect(result.stdout).toBe('');
    expect(result.stderr).toMatch(/^fleetwright: error: [^\n]+\n$/);
    expect(result.stderr).toMatch(message as RegExp);
    expect(result.status).toBe(2);
  });
});

describe('size table: the stable column', () => {
  // A fleet whose stability test is undetermined (growth interval reaching material growth)
  // must not read "yes": the column follows RunSummary.stabilityVerdict.
  it('says undetermined, yes or no as the three-way verdict does', async () => {
    const { renderSizeTable } = await import('../reports/size-table.ts');
    const interval = (mean: number) => intervalOf([mean - 1, mean, mean + 1], 0.95);
    const row = (robots: number, stable: boolean, stabilityVerdict: 'stable' | 'unstable' | 'undetermined') => ({
      robots, replications: 3, throughputPerHour: interval(100 * robots), throughputPerRobot: 100, leadTimeSeconds: interval(60), leadTimeP95Seconds: interval(120),
      stationStarvedFraction: interval(0.1), busyRobots: null, stable, stabilityVerdict, verdict: 'fails', because: 'x',
    });
    const text = renderSizeTable({
      scenario: 's', target: 500, demand: 'poisson', policy: 'p', recommendedRobots: null, reason: 'none', handFormulaRobots: 5,
      handFormula: { cycleSeconds: 36, loadSeconds: 1, loadedTravelSeconds: 1, unloadSeconds: 1, emptyTravelSeconds: 1, perRobotPerHour: 100, robotsExact: 5, lowerBoundRobots: 5 },
      knee: null, congestionFrom: null, capacity: null, leadP95LimitSeconds: null, replications: 3, hours: 1, seed: 1, confidence: 0.95,
      curve: [row(4, false, 'unstable'), row(5, true, 'undetermined'), row(6, true, 'stable')], capacityCurve: [], safety: 'note',
    });
    const lines = text.split('\n');
    const cell = (robots: number) => lines.find((l) => l.startsWith(`${robots} `))!.trim().split(/\s{2,}/)[8];
    expect([cell(4), cell(5), cell(6)]).toEqual(['no', 'undetermined', 'yes']);
  });
});
