/**
 * Deadlocks as closed wait-for sets (sim/deadlock-detector.ts). A deadlock is a knot of the
 * wait-for graph (Holt, "Some Deadlock Properties of Computer Systems", ACM Computing
 * Surveys 4(3), 1972): robots that wait only on each other. A chain of waiting robots that
 * ends at a robot in service is a queue (Coffman, Elphick & Shoshani 1971 list "circular
 * wait" among the necessary conditions: a chain with a head that will finish is not
 * circular). The positions below are built by hand, so every expected count follows from
 * the definitions, not from the code's output.
 */
import { describe, expect, it } from 'vitest';
import path from 'node:path';
import { DeadlockDetector, WaitStatus, detectorPhases } from '../sim/deadlock-detector.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { CellKind, parseLayout } from '../sim/layout.ts';
import { Phase, TaskState, World } from '../sim/world.ts';
import { runReplication, type ReplicationRecord } from '../sim/engine.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import type { Policy, PolicyFactory } from '../sim/policy.ts';
import type { Scenario } from '../sim/model.ts';
import { z } from 'zod';
import { makeScenario } from './helpers.ts';

const deadlockTicks = 120;

/** A world with robots at hand-placed cells; `goals` gives robot -> goal cell (a task's pickup). */
function handWorld(rows: string[], cells: [number, number][], goals: Map<number, [number, number]>) {
  const layout = parseLayout(rows.join('\n'));
  const at = ([x, y]: [number, number]) => y * layout.width + x;
  const world = new World(layout, cells.length);
  cells.forEach((xy, r) => {
    world.robotCell[r] = at(xy);
    world.occupant[at(xy)] = r;
  });
  for (const [robot, goal] of goals) {
    const task = world.addTask(0, at(goal), at(goal), -1, 1, 1, 0, TaskState.Open);
    world.assign(robot, task);
  }
  const stationOf = new Int32Array(layout.cellCount).fill(-1);
  let stations = 0;
  for (let c = 0; c < layout.cellCount; c++) if (layout.kind[c] === CellKind.Pickup || layout.kind[c] === CellKind.Drop) stationOf[c] = stations++;
  const queued = new Map<number, number>();
  const detector = new DeadlockDetector(layout, new DistanceTables(layout), cells.length, deadlockTicks, stationOf, stations, (s, _t, n) => queued.set(s, n));
  return { layout, world, at, detector, queued, stationOf };
}

/** Evaluates ticks [from, to) with nobody moving. */
function standStill(world: World, detector: DeadlockDetector, from: number, to: number, wanted: Int32Array | null = null): void {
  for (let t = from; t < to; t++) {
    world.currentTick = t;
    detector.evaluate(t, world, world.robotCell, wanted, false);
  }
}

const kinds = (detector: DeadlockDetector, endTick: number) => detector.finish(endTick).map((e) => e.kind);

describe('wait-for graph on hand-built positions', () => {
  it("the detector's own copy of the phases (written into its per-robot loop) is the world's", () => {
    expect(detectorPhases).toEqual(Phase);
  });


  it('a cell taken at the last tick but free at this one is free (the per-cell table of next cells holds no stale owner)', () => {
    // Robot 0 at 1:1 heads for 7:1; its only closer neighbour is 2:1. Robot 1 at 3:1 takes
    // 2:1 at the first tick, then stays put at the second. Robots 2-5 stand in the lower row
    // with goals, so that more than four robots stand and the detector uses its per-cell table.
    const { world, detector, at } = handWorld(
      ['##########', '#........#', '#........#', '##########'],
      [
        [1, 1],
        [3, 1],
        [2, 2],
        [3, 2],
        [4, 2],
        [5, 2],
      ],
      new Map([
        [0, [7, 1]],
        [2, [8, 2]],
        [3, [8, 2]],
        [4, [8, 2]],
        [5, [8, 2]],
      ]),
    );
    const next = Int32Array.from(world.robotCell);
    next[1] = at([2, 1]);
    world.currentTick = 0;
    detector.evaluate(0, world, next, null, false);
    expect(detector.status[0]).toBe(WaitStatus.Blocked);
    world.currentTick = 1;
    detector.evaluate(1, world, world.robotCell, null, false);
    expect(detector.status[0]).toBe(WaitStatus.Free);
  });

  it('a queue behind a robot in service at a station is queue time, never an episode', () => {
    // Robots 1..3 stand in line for the pickup at 7:1, where robot 0 is loading for 300 ticks.
    const { world, detector, queued, stationOf, at } = handWorld(
      ['#########', '#......P#', '#########'],
      [
        [7, 1],
        [6, 1],
        [5, 1],
        [4, 1],
      ],
      new Map([
        [1, [7, 1]],
        [2, [7, 1]],
        [3, [7, 1]],
      ]),
    );
    world.robotPhase[0] = Phase.HandlingPickup;
    standStill(world, detector, 0, 300);
    expect(Array.from(detector.status)).toEqual([WaitStatus.Handling, WaitStatus.Blocked, WaitStatus.Blocked, WaitStatus.Blocked]);
    // All three queue at the pickup where the head of their chain is served.
    expect(queued.get(stationOf[at([7, 1])])).toBe(3);
    expect(Array.from(detector.queueStation).slice(1)).toEqual([0, 0, 0]);
    expect(kinds(detector, 300)).toEqual([]);
  });

  it('a head-on pair in a one-lane aisle is one deadlock of both robots, found deadlockSeconds after it formed', () => {
    const { world, detector } = handWorld(
      ['#######', '#.....#', '#######'],
      [
        [2, 1],
        [3, 1],
      ],
      new Map([
        [0, [5, 1]],
        [1, [1, 1]],
      ]),
    );
    standStill(world, detector, 0, 400);
    const episodes = detector.finish(400);
    expect(episodes).toHaveLength(1);
    expect(episodes[0]).toMatchObject({ kind: 'deadlock', stallTick: 0, detectTick: deadlockTicks, members: [0, 1], robots: 2 });
    // Both robots lose the 400 ticks from the stall to the end.
    expect(episodes[0].lostTicks).toBe(2 * 400);
  });

  it('four robots each waiting on the next around a 2 x 2 block are one deadlock of four', () => {
    // a=1:1 -> b=2:1 -> c=2:2 -> d=1:2 -> a: each robot's goal is the next robot's cell.
    const { world, detector } = handWorld(
      ['####', '#..#', '#..#', '####'],
      [
        [1, 1],
        [2, 1],
        [2, 2],
        [1, 2],
      ],
      new Map([
        [0, [2, 1]],
        [1, [2, 2]],
        [2, [1, 2]],
        [3, [1, 1]],
      ]),
    );
    standStill(world, detector, 0, 200);
    const episodes = detector.finish(200);
    expect(episodes.map((e) => [e.kind, [...e.members].sort()])).toEqual([['deadlock', [0, 1, 2, 3]]]);
  });

  it('a robot without a task standing in the only way is a member of the deadlock it causes, and loses no time', () => {
    const { world, detector } = handWorld(
      ['########', '#......#', '########'],
      [
        [1, 1],
        [2, 1],
      ],
      new Map([[0, [6, 1]]]),
    );
    standStill(world, detector, 0, 150);
    const episodes = detector.finish(150);
    expect(episodes).toHaveLength(1);
    expect(episodes[0].kind).toBe('deadlock');
    expect(episodes[0].members).toEqual([0, 1]);
    expect(episodes[0].lostTicks).toBe(150);
  });

  it('a chain that ends at a moving robot is traffic: no episode, no station queue', () => {
    // Robot 0 needs 3:1; robot 1 crosses into it from 3:2 at every step (the picture is
    // evaluated afresh each tick, so robot 1 is always the one moving in).
    const { world, detector, queued, at } = handWorld(
      ['########', '#......#', '#......#', '########'],
      [
        [2, 1],
        [3, 2],
      ],
      new Map([
        [0, [6, 1]],
        [1, [3, 1]],
      ]),
    );
    for (let t = 0; t < 300; t++) {
      const next = Int32Array.from(world.robotCell);
      next[1] = at([3, 1]);
      detector.evaluate(t, world, next, null, false);
    }
    expect(detector.status[0]).toBe(WaitStatus.Blocked);
    expect(detector.status[1]).toBe(WaitStatus.Moving);
    expect(queued.size).toBe(0);
    expect(kinds(detector, 300).filter((k) => k === 'deadlock')).toEqual([]);
  });

  it('a robot that keeps moving without getting closer for deadlockSeconds is a livelock; circling a goal that serves others is not', () => {
    const layoutRows = ['##########', '#P.......#', '##########'];
    for (const servedMeanwhile of [false, true]) {
      const { world, detector, at } = handWorld(layoutRows, [[5, 1]], new Map([[0, [1, 1]]]));
      // Back and forth between 5:1 and 6:1: its best distance to the pickup (4) never improves.
      for (let t = 0; t <= deadlockTicks + 5; t++) {
        const here = world.robotCell[0];
        const there = here === at([5, 1]) ? at([6, 1]) : at([5, 1]);
        if (servedMeanwhile && t % 30 === 0) detector.served(at([1, 1]), t);
        const next = Int32Array.of(there);
        detector.evaluate(t, world, next, null, false);
        world.occupant[here] = -1;
        world.robotCell[0] = there;
        world.occupant[there] = 0;
      }
      expect(kinds(detector, 200)).toEqual(servedMeanwhile ? [] : ['livelock']);
    }
  });

  it('pacing north and south is a livelock as pacing east and west is; walking a winding corridor to the goal, never an episode', () => {
    // The detector follows each robot's column and row step by step (a step north or south
    // changes the cell by one row's width): the box of cells stood on must stay 1 x 2 while
    // the robot paces between two cells of a column, and a robot that gets closer at every
    // step, whichever way it turns, makes progress at every step.
    const column = ['###', '#P#', ...Array.from({ length: 10 }, () => '#.#'), '###'];
    const { world, detector, at } = handWorld(column, [[1, 6]], new Map([[0, [1, 1]]]));
    for (let t = 0; t <= deadlockTicks + 5; t++) {
      const here = world.robotCell[0];
      const there = here === at([1, 6]) ? at([1, 7]) : at([1, 6]);
      detector.evaluate(t, world, Int32Array.of(there), null, false);
      world.occupant[here] = -1;
      world.robotCell[0] = there;
      world.occupant[there] = 0;
    }
    expect(kinds(detector, 200)).toEqual(['livelock']);

    // A corridor that winds east, south, west, south, east... 30 cells a run: the only way
    // to the pickup at its far end, over 200 steps (longer than deadlockSeconds).
    const width = 32;
    const bands = 7;
    const rows: string[][] = [Array.from({ length: width }, () => '#')];
    const path: [number, number][] = [];
    for (let band = 0; band < bands; band++) {
      const y = 1 + 2 * band;
      const east = band % 2 === 0;
      rows.push(Array.from({ length: width }, (_, x) => (x === 0 || x === width - 1 ? '#' : '.')));
      for (let i = 0; i < width - 2; i++) path.push([east ? 1 + i : width - 2 - i, y]);
      if (band + 1 < bands) {
        const gap = east ? width - 2 : 1;
        rows.push(Array.from({ length: width }, (_, x) => (x === gap ? '.' : '#')));
        path.push([gap, y + 1]);
      }
    }
    rows.push(Array.from({ length: width }, () => '#'));
    const [goalX, goalY] = path[path.length - 1];
    rows[goalY][goalX] = 'P';
    const corridor = handWorld(
      rows.map((r) => r.join('')),
      [path[0]],
      new Map([[0, [goalX, goalY]]]),
    );
    expect(path.length).toBeGreaterThan(deadlockTicks + 60);
    for (let t = 0; t + 1 < path.length; t++) {
      const here = corridor.at(path[t]);
      const there = corridor.at(path[t + 1]);
      expect(corridor.world.robotCell[0]).toBe(here);
      corridor.detector.evaluate(t, corridor.world, Int32Array.of(there), null, false);
      // Progress at this tick: the next check is a whole deadlockSeconds away.
      expect(corridor.detector.nextCheckTick(corridor.world)).toBe(t + deadlockTicks);
      corridor.world.occupant[here] = -1;
      corridor.world.robotCell[0] = there;
      corridor.world.occupant[there] = 0;
    }
    expect(kinds(corridor.detector, path.length)).toEqual([]);
  });

  it('a robot on a long detour (moving on without getting closer, over new cells) is not a livelock', () => {
    // 150 ticks driving east, away from its pickup at the west end: no progress and moving
    // every tick, but it never comes back to a cell, so it is not moving in place.
    const row = '#P' + '.'.repeat(170) + '#';
    const { world, detector, at } = handWorld(['#'.repeat(row.length), row, '#'.repeat(row.length)], [[5, 1]], new Map([[0, [1, 1]]]));
    for (let t = 0; t <= 150; t++) {
      const here = world.robotCell[0];
      const next = Int32Array.of(here + 1);
      detector.evaluate(t, world, next, null, false);
      world.occupant[here] = -1;
      world.robotCell[0] = here + 1;
      world.occupant[here + 1] = 0;
    }
    expect(world.robotCell[0]).toBe(at([156, 1]));
    expect(kinds(detector, 151)).toEqual([]);
  });

  it('fleet gridlock: tasks open and a robot free with no delivery for deadlockSeconds, once; a delivery resets the clock', () => {
    const { world, detector, at } = handWorld(['#######', '#P...D#', '#######'], [[3, 1]], new Map());
    world.addTask(0, at([1, 1]), at([5, 1]), -1, 1, 1, 0, TaskState.Open);
    for (let t = 0; t < 100; t++) detector.evaluate(t, world, world.robotCell, null, false);
    detector.evaluate(100, world, world.robotCell, null, true); // a delivery at tick 100
    for (let t = 101; t < 400; t++) detector.evaluate(t, world, world.robotCell, null, false);
    const episodes = detector.finish(400);
    // No delivery since tick 100: found at 100 + deadlockSeconds.
    expect(episodes.map((e) => [e.kind, e.stallTick, e.detectTick, e.members])).toEqual([['gridlock', 100, 220, [0]]]);
  });

  it("the policy's wantedCells channel overrides the inference", () => {
    // Robot 0 heads for 6:1 with a free cell ahead, but its policy says it wanted 1:2 (a
    // pocket held by robot 1, which has no task): it waits on robot 1, a closed set.
    const rows = ['########', '#......#', '#.######', '########'];
    for (const channel of [false, true]) {
      const { world, detector, at } = handWorld(
        rows,
        [
          [1, 1],
          [1, 2],
        ],
        new Map([[0, [6, 1]]]),
      );
      const wanted = channel ? Int32Array.of(at([1, 2]), -1) : null;
      standStill(world, detector, 0, 200, wanted);
      expect(detector.status[0]).toBe(channel ? WaitStatus.Blocked : WaitStatus.Free);
      expect(kinds(detector, 200)).toEqual(channel ? ['deadlock'] : []);
    }
  });
});

// Engine-level -------------------------------------------------------------------------

describe('the engine counts deadlocks, not queues', () => {
  it('a queue at a slow pickup (150 s, longer than deadlockSeconds) gives 0 episodes and shows as queue time there', () => {
    // A ring: robots start on the parking row, go west along row 2 and down the west column
    // to the pickup P(2:4), leave east to the drop D(8:4) and return to parking up the east
    // column, so no two robots meet head-on. Loading takes 150 s, longer than deadlockSeconds.
    const layout = ['###########', '####HHHH###', '#.........#', '#.#######.#', '#.P.....D.#', '###########'].join('\n');
    const cell = (x: number, y: number) => y * 11 + x;
    const tasks = [0, 1, 2, 3].map(() => ({ releaseSeconds: 0, pickup: cell(2, 4), drop: cell(8, 4) }));
    const scenario = makeScenario({ layout, robots: 4, policy: 'greedy-reactive', pickupSeconds: 150, dropSeconds: 2, hours: 1, recoverySeconds: 0, demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks } });
    let longestWait = 0;
    const since = new Map<number, number>();
    const record = runReplication(prepareSetup(scenario), 0, {
      afterMotion: (tick, world) => {
        for (let r = 0; r < world.robotCount; r++) {
          const waiting = world.robotPhase[r] === Phase.ToPickup;
          if (waiting && !since.has(r)) since.set(r, tick);
          if (!waiting && since.has(r)) {
            longestWait = Math.max(longestWait, tick - since.get(r)!);
            since.delete(r);
          }
        }
      },
    });
    expect(record.collisions).toBe(0);
    expect(record.delivered).toBe(4);
    // The last robot waited behind three loadings: far longer than deadlockSeconds (120 s).
    expect(longestWait).toBeGreaterThan(3 * 150);
    expect(record.metrics.episodes).toEqual([]);
    const station = Array.from(record.stationCells).indexOf(cell(2, 4));
    let queueTicks = 0;
    for (let i = 0; i < record.metrics.intervalCount; i++) queueTicks += record.metrics.stationQueue[i * record.stationCells.length + station];
    // By hand: the line forms at tick 7 (robot 0 loading, robots 1-3 behind it). Robot k
    // stands behind k loadings of 150 ticks; in the tick the robot ahead drives off the
    // chain ends at a moving robot (traffic), and the follower is queued again from the tick
    // it moves up. So 150 x (1 + 2 + 3) = 900 robot-ticks queued at the pickup.
    expect(queueTicks).toBe(900);
  });

  it('a head-on pair in a one-lane aisle (greedy-reactive) gives exactly 1 deadlock of both robots', () => {
    const corridor = ['##########', '#HPD##DPH#', '#........#', '#####.####', '##########'].join('\n');
    const cell = (x: number, y: number) => y * 10 + x;
    const scenario = makeScenario({
      layout: corridor,
      robots: 2,
      policy: 'greedy-reactive',
      pickupSeconds: 2,
      dropSeconds: 2,
      hours: 1,
      recoverySeconds: 0,
      demand: {
        kind: 'trace',
        mode: 'delivery',
        tracePath: 'inline',
        tasks: [
          { releaseSeconds: 0, pickup: cell(2, 1), drop: cell(6, 1) },
          { releaseSeconds: 0, pickup: cell(7, 1), drop: cell(3, 1) },
        ],
      },
    });
    const record = runReplication(prepareSetup(scenario), 0);
    expect(record.metrics.episodes.map((e) => [e.kind, [...e.members].sort()])).toEqual([['deadlock', [0, 1]]]);
  });

  it('four robots each waiting on the next around a 2 x 2 block give exactly 1 deadlock, inferred or told by the policy', () => {
    // The four floor cells 1:1, 2:1, 1:2, 2:2 hold robots 0..3 (placement in reading order);
    // each robot's task starts at the next robot's cell, clockwise, and a robot moves only
    // into a free cell, so none ever moves.
    const layout = ['#####', '#..P#', '#..D#', '#####'].join('\n');
    const cell = (x: number, y: number) => y * 5 + x;
    const next = new Map([
      [cell(1, 1), cell(2, 1)],
      [cell(2, 1), cell(2, 2)],
      [cell(2, 2), cell(1, 2)],
      [cell(1, 2), cell(1, 1)],
    ]);
    const tasks = [...next.values()].map((pickup) => ({ releaseSeconds: 0, pickup, drop: cell(3, 2) }));
    for (const tell of [false, true]) {
      const scripted: PolicyFactory<Record<string, never>> = {
        name: 'scripted-cycle',
        summary: 'test: each robot takes the task at the next cell and waits for it',
        source: 'test',
        allowsRecovery: false,
        options: z.object({}).strict() as never,
        optionDocs: [],
        create({ world }): Policy {
          const wantedCells = tell ? new Int32Array(world.robotCount) : undefined;
          return {
            wantedCells,
            step: () => {
              for (let r = 0; r < world.robotCount; r++) {
                if (world.robotTask[r] >= 0) continue;
                const task = world.openTasks.find((t) => world.taskPickup[t] === next.get(world.robotCell[r]));
                if (task !== undefined) world.assign(r, task);
              }
              if (wantedCells) for (let r = 0; r < world.robotCount; r++) wantedCells[r] = world.goalOf(r);
              return Infinity;
            },
          };
        },
      };
      const scenario: Scenario = makeScenario({ layout, robots: 4, hours: 0.5, recoverySeconds: 0, demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks } });
      const setup = { ...prepareSetup(scenario), policy: scripted, policyOptions: {} };
      const record = runReplication(setup, 0);
      expect(record.metrics.episodes.map((e) => [e.kind, [...e.members].sort(), e.detectTick])).toEqual([['deadlock', [0, 1, 2, 3], 120]]);
    }
  });

  describe('planned policies on the well-formed demo hall give 0 episodes at any load (Ma et al., AAMAS 2017)', () => {
    const demoHall = path.join(import.meta.dirname, '..', 'scenarios', 'demo-sortation.yaml');
    const loads: (number | 'saturated')[] = [300, 1500, 6000, 'saturated'];
    for (const policy of ['token-passing', 'flow-batch']) {
      for (const robots of [8, 32]) {
        it(`${policy}, ${robots} robots (38 parking spots), ${loads.join(', ')} tasks/h`, () => {
          for (const load of loads) {
            const base = loadScenarioFile(demoHall, { policy, robots, hours: 0.5, replications: 1 });
            const scenario: Scenario =
              load === 'saturated'
                ? { ...base, demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { kind: 'zipf', skew: 0.6 } } }
                : { ...base, demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: load, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'zipf', skew: 0.6 } } };
            const record: ReplicationRecord = runReplication(prepareSetup(scenario), 0);
            expect(record.collisions).toBe(0);
            expect(record.delivered).toBeGreaterThan(0);
            expect(record.metrics.episodes.map((e) => `${e.kind} at ${e.detectTick}`), `${load}`).toEqual([]);
          }
        });
      }
    }
  });

  it('flow-batch, 24 robots, 30 s pickups (queues at every induct): 0 episodes', () => {
    const demoHall = path.join(import.meta.dirname, '..', 'scenarios', 'demo-sortation.yaml');
    const base = loadScenarioFile(demoHall, { policy: 'flow-batch', robots: 24, hours: 1, replications: 1 });
    const scenario: Scenario = { ...base, handling: { ...base.handling, pickupSeconds: { dist: 'fixed', seconds: 30 } } };
    const record = runReplication(prepareSetup(scenario), 0);
    expect(record.collisions).toBe(0);
    expect(record.metrics.episodes).toEqual([]);
  });
});
