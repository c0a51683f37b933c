/**
 * Breakdowns (sim/breakdowns.ts, sim/upkeep.ts) against reliability theory and the engine's
 * contract: fleet availability of an alternating renewal process, MTBF / (MTBF + MTTR)
 * (steady-state availability; Ross, Introduction to Probability Models, ch. 7; IEC
 * 60050-192; REFERENCES.md: MTBF 2 h, MTTR 30 min gives 0.8); breakdown times that do not
 * depend on the policy (common random numbers); a broken robot that stays where it failed
 * and never causes a collision.
 */
import { describe, expect, it } from 'vitest';
import { makeScenario } from './helpers.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import { BreakdownClock, steadyStateAvailability } from '../sim/breakdowns.ts';
import type { Scenario } from '../sim/model.ts';
import { readFileSync } from 'node:fs';
import { parseScenarioText } from '../scenarios/load.ts';
import seedrandom from 'seedrandom';
import { Phase, TaskState, World } from '../sim/world.ts';
import { DeadlockDetector, WaitStatus } from '../sim/deadlock-detector.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { parseLayout } from '../sim/layout.ts';

const demoLayout = parseScenarioText(readFileSync('scenarios/demo-sortation.yaml', 'utf8'), null).layoutText;

function withBreakdowns(scenario: Scenario, mtbfHours: number, mttrMinutes: number): Scenario {
  return { ...scenario, faults: { breakdowns: { timeToFailure: { dist: 'exponential', mean: mtbfHours * 3600 }, repair: { dist: 'exponential', mean: mttrMinutes * 60 } } } };
}

describe('steady-state availability MTBF / (MTBF + MTTR)', () => {
  it('of the spec: MTBF 2 h, MTTR 30 min gives 0.8 (REFERENCES.md)', () => {
    expect(steadyStateAvailability({ timeToFailure: { dist: 'exponential', mean: 7200 }, repair: { dist: 'exponential', mean: 1800 } })).toBeCloseTo(0.8, 12);
    expect(steadyStateAvailability({ timeToFailure: { dist: 'uniform', min: 3600, max: 10800 }, repair: { dist: 'fixed', seconds: 1800 } })).toBeCloseTo(0.8, 12);
  });

  it('of one robot\'s clock over 20,000 cycles: up share within 1% of 0.8', () => {
    const clock = new BreakdownClock({ timeToFailure: { dist: 'exponential', mean: 7200 }, repair: { dist: 'exponential', mean: 1800 } }, 1, 1, () => seedrandom('clock'));
    let t = 0;
    let up = 0;
    for (let cycle = 0; cycle < 20_000; cycle++) {
      const failure = clock.nextFailure(0, t);
      up += failure - t;
      t = failure + clock.repairTicks(0);
    }
    expect(up / t).toBeGreaterThan(0.79);
    expect(up / t).toBeLessThan(0.81);
  });

  it('of a fleet: 100 robots over 100 h, 5 replications: the availability interval holds 0.8 and is narrow', () => {
    // Robots rest on the demo hall (one task an hour), so the run is breakdowns alone.
    const base = makeScenario({
      layout: demoLayout,
      robots: 100,
      policy: 'pibt',
      demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 1, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
      hours: 100,
      replications: 5,
      warmup: 0,
      sampleSeconds: 3600,
      recoverySeconds: 0,
    });
    const scenario = withBreakdowns({ ...base, run: { ...base.run, confidence: 0.99 } }, 2, 30);
    const records = runReplications(scenario);
    for (const record of records) expect(record.collisions).toBe(0);
    const { summary } = summarize(scenario, records, 0);
    const availability = summary.availability!;
    expect(availability.low!).toBeLessThanOrEqual(0.8);
    expect(availability.high!).toBeGreaterThanOrEqual(0.8);
    expect(availability.halfWidth!).toBeLessThan(0.01);
    // Broken share and availability are complements; 100 robots fail about 100 x 100 / 2.5 = 4000 times per replication.
    expect(summary.robotTime.broken!.mean).toBeCloseTo(1 - availability.mean, 12);
    expect(summary.breakdowns!.failuresPerHour.mean * 100).toBeGreaterThan(3600);
    expect(summary.breakdowns!.failuresPerHour.mean * 100).toBeLessThan(4400);
    expect(summary.breakdowns!.expectedAvailability).toBeCloseTo(0.8, 12);
  });
});

describe('a broken robot in the engine', () => {
  const busy = (policy: string): Scenario =>
    withBreakdowns(
      makeScenario({
        layout: demoLayout,
        robots: 20,
        policy,
        demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 700, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
        hours: 2,
        replications: 1,
        warmup: 0,
      }),
      0.5,
      5,
    );

  it.each(['pibt', 'greedy-reactive', 'token-passing', 'flow-batch'])('%s: stays on its cell, holds no unpicked task, keeps its load; no collision', (policy) => {
    const brokenAt = new Map<number, number>();
    let brokenTicks = 0;
    let loadedBroken = 0;
    const watch = (_tick: number, world: World) => {
      for (let r = 0; r < world.robotCount; r++) {
        if (!world.robotBroken[r]) {
          brokenAt.delete(r);
          continue;
        }
        brokenTicks++;
        const cell = brokenAt.get(r);
        if (cell === undefined) brokenAt.set(r, world.robotCell[r]);
        else expect(world.robotCell[r]).toBe(cell);
        expect(world.robotPhase[r]).not.toBe(Phase.ToPickup);
        if (world.robotPhase[r] === Phase.ToDrop) {
          loadedBroken++;
          expect(world.robotTask[r]).toBeGreaterThanOrEqual(0);
        }
      }
    };
    const [record] = runReplications(busy(policy), undefined, { afterMotion: watch });
    expect(record.collisions).toBe(0);
    expect(record.illegalSteps).toBe(0);
    expect(brokenTicks).toBeGreaterThan(0);
    // Reactive policies stop robots at once, so some break down while carrying a parcel.
    if (policy === 'pibt') expect(loadedBroken).toBeGreaterThan(0);
  });

  it('breakdown times do not depend on the policy (common random numbers): reactive policies fail at the same ticks', () => {
    const failures = (policy: string) => Array.from(runReplications(busy(policy))[0].upkeep!.metrics.failures);
    const pibt = failures('pibt');
    expect(pibt.reduce((s, v) => s + v, 0)).toBeGreaterThan(40);
    expect(failures('greedy-reactive')).toEqual(pibt);
  });
});

describe('the deadlock detector and a broken robot (a wait-for chain ending at a robot that will go on is not circular: Coffman, Elphick & Shoshani 1971)', () => {
  it('a head-on pair with one robot broken down is no deadlock while it waits for its repair; the same pair after the repair is one', () => {
    // One-lane aisle: robot 0 at 2:1 heads east to 5:1, robot 1 at 3:1 heads west to 1:1.
    const layout = parseLayout(['#######', '#.....#', '#######'].join('\n'));
    const at = (x: number) => layout.width + x;
    const world = new World(layout, 2);
    [at(2), at(3)].forEach((cell, r) => {
      world.robotCell[r] = cell;
      world.occupant[cell] = r;
    });
    world.assign(0, world.addTask(0, at(5), at(5), -1, 1, 1, 0, TaskState.Open));
    world.assign(1, world.addTask(0, at(1), at(1), -1, 1, 1, 0, TaskState.Open));
    const detector = new DeadlockDetector(layout, new DistanceTables(layout), 2, 120, new Int32Array(layout.cellCount).fill(-1), 0, () => {});
    const evaluate = (from: number, to: number) => {
      for (let t = from; t < to; t++) {
        world.currentTick = t;
        detector.evaluate(t, world, world.robotCell, null, false);
      }
    };
    // Robot 0 broken for 600 ticks (10 min, five times deadlockSeconds): robot 1 queues behind it.
    world.robotBroken[0] = 1;
    evaluate(0, 600);
    expect(Array.from(detector.status)).toEqual([WaitStatus.Handling, WaitStatus.Blocked]);
    // Repaired at 600 (the upkeep restarts its stall clock): now both wait on each other.
    world.robotBroken[0] = 0;
    detector.restart(0, 600);
    detector.restart(1, 600);
    evaluate(600, 900);
    const episodes = detector.finish(900);
    expect(episodes).toHaveLength(1);
    expect(episodes[0]).toMatchObject({ kind: 'deadlock', detectTick: 600 + 120, members: [0, 1] });
  });

  it('a robot queued for a charger (no goal, not idle) stands like an idle robot', () => {
    const layout = parseLayout(['#####', '#...#', '#####'].join('\n'));
    const world = new World(layout, 1);
    world.robotCell[0] = layout.width + 2;
    world.occupant[layout.width + 2] = 0;
    world.robotPhase[0] = Phase.WaitingForCharger;
    const detector = new DeadlockDetector(layout, new DistanceTables(layout), 1, 120, new Int32Array(layout.cellCount).fill(-1), 0, () => {});
    detector.evaluate(0, world, world.robotCell, null, false);
    expect(detector.status[0]).toBe(WaitStatus.IdleStill);
  });
});
