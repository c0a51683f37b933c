/**
 * The flow-batch policy (policies/flow-batch): safety and liveness on the demo hall, the
 * optimality of each epoch's assignment against brute force over every robot-task
 * pairing, and ageing (a far task is served in an overloaded run, and starves without it).
 *
 * The runs build their setup directly from the factory, so these tests do not depend on
 * the registry.
 */
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../scenarios/load.ts';
import type { Scenario } from '../sim/model.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { runReplication, type ReplicationRecord } from '../sim/engine.ts';
import { checkWellFormed, parseLayout, type Layout } from '../sim/layout.ts';
import { Phase, TaskState, World } from '../sim/world.ts';
import { flowBatch } from '../policies/flow-batch/index.ts';
import { flowBatchOptions } from '../policies/flow-batch/flow-batch.ts';
import { makeScenario } from './helpers.ts';

const demoPath = fileURLToPath(new URL('../scenarios/demo-sortation.yaml', import.meta.url));

function run(scenario: Scenario, options: Record<string, unknown> = {}): { record: ReplicationRecord; world: World } {
  const layout = parseLayout(scenario.layoutText);
  let world: World | null = null;
  const record = runReplication(
    {
      scenario: { ...scenario, policy: { name: 'flow-batch', options } },
      layout,
      distances: new DistanceTables(layout),
      policy: flowBatch,
      policyOptions: flowBatchOptions.parse(options),
    },
    0,
    { afterMotion: (_tick, w) => (world = w) },
  );
  return { record, world: world! };
}

/** The demo hall with two more parking spots (40 in all), so 40 robots meet well-formedness. */
function demoWith40ParkingSpots(): Scenario {
  const demo = loadScenarioFile(demoPath, { robots: 40, hours: 1 });
  const rows = demo.layoutText.split('\n');
  const last = rows.findLastIndex((row) => row.includes('H'));
  rows[last] = '#HH' + rows[last].slice(3);
  return { ...demo, layoutText: rows.join('\n') };
}

describe('flow-batch on the demo hall (1 simulated hour, 900 tasks/h)', () => {
  it('10 robots (well-formed, overloaded): no collision, no deadlock, tasks delivered', () => {
    const scenario = loadScenarioFile(demoPath, { robots: 10, hours: 1 });
    expect(checkWellFormed(parseLayout(scenario.layoutText), 10).wellFormed).toBe(true);
    const { record } = run(scenario);
    expect(record.collisions).toBe(0);
    expect(record.illegalSteps).toBe(0);
    expect(record.metrics.episodes).toHaveLength(0);
    // 10 robots carry about 720 parcels an hour here; 900 arrive, so a queue builds.
    expect(record.delivered).toBeGreaterThan(600);
    expect(record.released).toBe(record.delivered + record.open);
  });

  it('40 robots on the hall with 40 parking spots (well-formed): no collision, no deadlock, keeps up with demand', () => {
    const scenario = demoWith40ParkingSpots();
    expect(checkWellFormed(parseLayout(scenario.layoutText), 40).wellFormed).toBe(true);
    const { record } = run(scenario);
    expect(record.collisions).toBe(0);
    expect(record.illegalSteps).toBe(0);
    expect(record.metrics.episodes).toHaveLength(0);
    expect(record.delivered).toBeGreaterThan(0.95 * record.released);
  });

  it('40 robots on the demo hall itself (38 parking spots, so 2 rest at rest cells): no collision, keeps up with demand', () => {
    const { record } = run(loadScenarioFile(demoPath, { robots: 40, hours: 1 }));
    expect(record.policyCounters.restCells).toBe(2);
    expect(record.collisions).toBe(0);
    expect(record.illegalSteps).toBe(0);
    expect(record.delivered).toBeGreaterThan(0.9 * record.released);
  });
});

// Robot-to-pickup distances are Manhattan distances here: no obstacle inside the walls.
const smallHall = ['###########', '#H........#', '#..P....P.#', '#H........#', '#D.HD...HD#', '###########'].join('\n');

/** One dispatch at tick 0 with robots on the given cells and one open task per pickup. */
function dispatchOnce(layout: Layout, robotCells: number[], tasks: { pickup: number; drop: number }[]) {
  const distances = new DistanceTables(layout);
  const world = new World(layout, robotCells.length);
  robotCells.forEach((cell, r) => {
    world.robotCell[r] = cell;
    world.occupant[cell] = r;
  });
  for (const task of tasks) world.addTask(0, task.pickup, task.drop, -1, 4, 3, 0, TaskState.Open);
  const policy = flowBatch.create({ world, layout, distances, tickSeconds: 1, random: () => 0.5 }, flowBatchOptions.parse({}));
  policy.step(0, Int32Array.from(world.robotCell));
  let total = 0;
  let assigned = 0;
  for (let r = 0; r < robotCells.length; r++) {
    const task = world.robotTask[r];
    if (task < 0) continue;
    assigned++;
    total += distances.distance(robotCells[r], world.taskPickup[task]);
  }
  return { total, assigned, distances };
}

/** Minimal total robot-to-pickup distance over every way to pair min(robots, tasks) of them, by enumeration. */
function bruteForceMinimum(distance: (robot: number, task: number) => number, robots: number, tasks: number): number {
  let best = Infinity;
  const usedRobot = new Array<boolean>(robots).fill(false);
  const usedTask = new Array<boolean>(tasks).fill(false);
  const pairs = Math.min(robots, tasks);
  const extend = (made: number, sum: number): void => {
    if (made === pairs) {
      best = Math.min(best, sum);
      return;
    }
    for (let r = 0; r < robots; r++) {
      if (usedRobot[r]) continue;
      usedRobot[r] = true;
      for (let t = 0; t < tasks; t++) {
        if (usedTask[t]) continue;
        usedTask[t] = true;
        extend(made + 1, sum + distance(r, t));
        usedTask[t] = false;
      }
      usedRobot[r] = false;
    }
  };
  extend(0, 0);
  return best;
}

describe('flow-batch assignment is optimal', () => {
  const layout = parseLayout(smallHall);
  const at = (x: number, y: number) => y * layout.width + x;
  const pickup1 = at(3, 2);
  const pickup2 = at(8, 2);
  const drop1 = at(1, 4);
  const drop2 = at(9, 4);

  it('3 free robots, 2 open tasks: total robot-to-pickup distance equals the brute-force minimum', () => {
    // Robot 0 stands between the pickups, a little nearer the first (older) task; robots 1
    // and 2 stand by the first pickup, far from the second. Serving tasks oldest first with
    // the nearest robot gives 2 + 8 = 10 cells; the optimum sends robot 0 to the second
    // pickup: 3 + 3 = 6 cells.
    const robots = [at(5, 2), at(1, 3), at(1, 1)];
    const tasks = [
      { pickup: pickup1, drop: drop1 },
      { pickup: pickup2, drop: drop2 },
    ];
    const { total, assigned, distances } = dispatchOnce(layout, robots, tasks);
    const d = (r: number, t: number) => distances.distance(robots[r], tasks[t].pickup);
    const minimum = bruteForceMinimum(d, robots.length, tasks.length);
    const greedy = d(0, 0) + Math.min(d(1, 1), d(2, 1));
    expect(minimum).toBe(6);
    expect(greedy).toBe(10);
    expect(assigned).toBe(2);
    expect(total).toBe(minimum);
  });

  it('2 free robots, 3 open tasks: the robots get the pair of tasks with the least total distance', () => {
    // Nearest task per robot in robot order gives robot 0 the first pickup (2) and robot 1
    // the third (5): 7 cells. The optimum gives robot 0 the third (3) and robot 1 the first
    // (2): 5 cells, and leaves the second task open.
    const robots = [at(4, 1), at(2, 3)];
    const tasks = [
      { pickup: pickup1, drop: drop1 },
      { pickup: pickup2, drop: drop2 },
      { pickup: at(6, 2), drop: at(4, 4) },
    ];
    const { total, assigned, distances } = dispatchOnce(layout, robots, tasks);
    const d = (r: number, t: number) => distances.distance(robots[r], tasks[t].pickup);
    const minimum = bruteForceMinimum(d, robots.length, tasks.length);
    expect(minimum).toBe(5);
    expect(d(0, 0) + d(1, 2)).toBe(7);
    expect(assigned).toBe(2);
    expect(total).toBe(minimum);
  });
});

describe('flow-batch ageing', () => {
  // Two busy pickups by the drops in the west, one rarely used pickup 35 cells east of the drops.
  const layoutText = [
    '############################################',
    '#HH........................................#',
    '#P...D..................................P..#',
    '#H.........................................#',
    '#P...D.....................................#',
    '#HH........................................#',
    '############################################',
  ].join('\n');
  const layout = parseLayout(layoutText);
  const far = 2 * layout.width + layoutText.split('\n')[2].lastIndexOf('P');
  const near = [2 * layout.width + 1, 4 * layout.width + 1];
  expect(Array.from(layout.pickups).sort((a, b) => a - b)).toEqual([near[0], far, near[1]]);

  const overloaded = (): Scenario =>
    makeScenario({
      layout: layoutText,
      robots: 4,
      hours: 1,
      pickupSeconds: 4,
      dropSeconds: 3,
      demand: {
        kind: 'poisson',
        mode: 'delivery',
        tasksPerHour: 1500,
        profile: null,
        pickups: { kind: 'weights', weights: new Map([[near[0], 1], [near[1], 1], [far, 0.05]]) },
        drops: { kind: 'uniform' },
      },
    });

  // Task slots are reused after delivery, so the far pickup's tasks are counted by the
  // recorder: released with work there, and pickups handled there (served).
  const farTasks = (record: ReplicationRecord) => {
    const station = Array.from(record.stationCells).indexOf(far);
    return { released: record.metrics.stationReleased[station], delivered: record.metrics.stationServed[station] };
  };

  it('a task far from every robot is served under overload', () => {
    // maxTasksPerEpoch beyond the backlog, so ageing, not the oldest-first cap, does the work.
    const { record } = run(overloaded(), { ageWeight: 0.1, maxTasksPerEpoch: 100_000 });
    expect(record.collisions).toBe(0);
    expect(record.open).toBeGreaterThan(100);
    const { released, delivered } = farTasks(record);
    expect(released).toBeGreaterThan(5);
    expect(delivered).toBeGreaterThan(0);
  });

  it('without ageing the far task starves under the same overload', () => {
    const { record } = run(overloaded(), { ageWeight: 0, maxTasksPerEpoch: 100_000 });
    const { released, delivered } = farTasks(record);
    expect(released).toBeGreaterThan(5);
    expect(delivered).toBe(0);
  });
});

describe('flow-batch wake-ups', () => {
  it('asks to be woken at the next epoch (epochSeconds / tickSeconds ticks) while a task waits and robots are free', () => {
    // The pickup at 5:1 is walled in: no robot can reach it, so the task stays open.
    const layout = parseLayout(['#######', '#H.P#P#', '#H.D###', '#######'].join('\n'));
    const distances = new DistanceTables(layout);
    const world = new World(layout, 2);
    [layout.parking[0], layout.parking[1]].forEach((cell, r) => {
      world.robotCell[r] = cell;
      world.occupant[cell] = r;
    });
    world.addTask(0, 1 * layout.width + 5, 2 * layout.width + 3, -1, 0, 0, 0, TaskState.Open);
    const policy = flowBatch.create({ world, layout, distances, tickSeconds: 0.5, random: () => 0.5 }, flowBatchOptions.parse({ epochSeconds: 5 }));
    const moves = Int32Array.from(world.robotCell);
    expect(policy.step(0, moves)).toBe(10);
    expect(policy.step(3, moves)).toBe(10);
    expect(policy.step(10, moves)).toBe(20);
    expect(world.openTasks).toEqual([0]);
    // With the task gone, nothing is left to wake for.
    world.openTasks.length = 0;
    expect(policy.step(11, moves)).toBe(Infinity);
  });
});

describe('flow-batch restAt', () => {
  it("ending paths at parking shortens lead time against resting on the drop, on the same tasks (common random numbers)", () => {
    const base = loadScenarioFile(fileURLToPath(new URL('../scenarios/demo-sortation.yaml', import.meta.url)), { policy: 'flow-batch', hours: 1, replications: 2 });
    const lead = (restAt: 'drop' | 'parking') => {
      const scenario: Scenario = { ...base, policy: { name: 'flow-batch', options: { restAt } } };
      let sum = 0;
      let count = 0;
      for (const rep of [0, 1]) {
        const record = runReplication({ scenario, layout: parseLayout(scenario.layoutText), distances: new DistanceTables(parseLayout(scenario.layoutText)), policy: flowBatch, policyOptions: flowBatchOptions.parse({ restAt }) }, rep);
        expect(record.collisions).toBe(0);
        for (const ticks of record.metrics.leadTicks) sum += ticks;
        count += record.metrics.leadTicks.length;
      }
      return sum / count;
    };
    // With rests on the drop, a parcel for a chute waits until the robot before it has left
    // the chute and found a new task (the token-passing endpoint rule); at parking it does not.
    expect(lead('parking')).toBeLessThan(0.85 * lead('drop'));
  });
});

describe('flow-batch pickup queue limit', () => {
  it('never has more robots bound for one pickup than pickupQueueLimit; without the limit a deep backlog queues more', () => {
    const scenario = loadScenarioFile(demoPath, { robots: 100, hours: 0.5, tasksPerHour: 6000 });
    const mostBound = (options: Record<string, unknown>) => {
      const layout = parseLayout(scenario.layoutText);
      let most = 0;
      const bound = new Int32Array(layout.cellCount);
      const record = runReplication(
        { scenario: { ...scenario, policy: { name: 'flow-batch', options } }, layout, distances: new DistanceTables(layout), policy: flowBatch, policyOptions: flowBatchOptions.parse(options) },
        0,
        {
          afterMotion: (_tick, world) => {
            bound.fill(0);
            for (let r = 0; r < world.robotCount; r++) {
              if (world.robotPhase[r] !== Phase.ToPickup) continue;
              const pickup = world.taskPickup[world.robotTask[r]];
              most = Math.max(most, ++bound[pickup]);
            }
          },
        },
      );
      expect(record.collisions).toBe(0);
      return most;
    };
    expect(mostBound({ pickupQueueLimit: 3 })).toBeLessThanOrEqual(3);
    expect(mostBound({})).toBeLessThanOrEqual(4);
    expect(mostBound({ pickupQueueLimit: 0 })).toBeGreaterThan(4);
  });
});

describe('flow-batch held-back count', () => {
  it('counts the task-seconds a task waits only because its pickup queue is full (worked by hand)', () => {
    // Robots on H(1,1) and H(1,2), both tasks at P(4,1) -> D(7,1), released at 0 s, queue
    // limit 1. At 0 s only task 0 is a candidate (the queue takes one robot); robot 0 is
    // nearer (3 cells against 4) and takes it. Task 1 is held back until robot 0 reaches
    // the pickup at 3 s and the queue is no longer full: 3 task-seconds. (It then waits for
    // the next epoch at 5 s, which is not the queue's doing.)
    const layout = ['#########', '#H..P..D#', '#H......#', '#########'].join('\n');
    const w = 9;
    const tasks = [0, 1].map(() => ({ releaseSeconds: 0, pickup: 1 * w + 4, drop: 1 * w + 7 }));
    const scenario = makeScenario({ layout, robots: 2, pickupSeconds: 2, dropSeconds: 1, hours: 0.05, demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks } });
    const limited = run(scenario, { pickupQueueLimit: 1 }).record;
    expect(limited.delivered).toBe(2);
    expect(limited.policyCounters.heldBackTaskSeconds).toBe(3);
    // Without a limit nothing holds a task back: both robots set out at 0 s.
    const unlimited = run(scenario, { pickupQueueLimit: 0 }).record;
    expect(unlimited.delivered).toBe(2);
    expect(unlimited.policyCounters.heldBackTaskSeconds).toBe(0);
  });
});
