/**
 * Executing planned paths under execution delays through an action dependency graph
 * (sim/plan-execution.ts; Hönig, Kiesel, Tinka, Durham & Ayanian, "Persistent and Robust
 * Execution of MAPF Schedules in Warehouses", IEEE RA-L 4(2), 2019): robots keep the order
 * in which the plan has them pass each cell, so a held-back robot makes the robots planned
 * after it wait instead of colliding, and nobody re-plans. The tests drive the executor as
 * the engine does (hold a move, ask again at the same tick) and check every executed tick
 * with their own vertex and swap collision checks (Stern et al., SoCS 2019 definitions).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { buildLayout, CellKind, parseLayout, type Layout } from '../sim/layout.ts';
import { World } from '../sim/world.ts';
import { ReservationTable } from '../sim/reservation-table.ts';
import { SpaceTimeAStar } from '../sim/space-time-astar.ts';
import { PlanExecution } from '../sim/plan-execution.ts';
import { distanceTable } from '../sim/distance-table.ts';

interface Fleet {
  layout: Layout;
  world: World;
  table: ReservationTable;
  execution: PlanExecution;
  /** Cells per robot at every executed tick, from tick 0. */
  history: number[][];
}

function fleet(layout: Layout, starts: number[]): Fleet {
  const world = new World(layout, starts.length);
  world.movesMayBeHeld = true;
  starts.forEach((c, r) => {
    world.robotCell[r] = c;
    world.occupant[c] = r;
  });
  const table = new ReservationTable(layout.cellCount, starts.length, 64);
  starts.forEach((c, r) => table.rest(r, c, 0));
  const execution = new PlanExecution(world, layout, table);
  return { layout, world, table, execution, history: [Array.from(world.robotCell)] };
}

/**
 * One tick as the engine runs it: the executor decides; robots in `hold` (robot -> ticks)
 * are held back if they were to move, and the executor is asked again; then the moves run.
 */
function tick(f: Fleet, t: number, hold: Map<number, number> = new Map(), plan?: () => void): void {
  const { world, execution } = f;
  world.currentTick = t;
  execution.beginStep(t);
  plan?.();
  const moves = Int32Array.from(world.robotCell);
  execution.step(t, moves, undefined);
  let again = false;
  for (const [r, ticks] of hold) {
    if (moves[r] !== world.robotCell[r] && !world.isFixed(r)) {
      world.robotHeldUntil[r] = t + ticks;
      again = true;
    }
  }
  if (again) {
    moves.set(world.robotCell);
    execution.step(t, moves, undefined);
  }
  for (let r = 0; r < world.robotCount; r++) {
    if (world.robotHeldUntil[r] > t) moves[r] = world.robotCell[r];
  }
  const before = Array.from(world.robotCell);
  world.occupant.fill(-1);
  for (let r = 0; r < world.robotCount; r++) {
    world.robotCell[r] = moves[r];
    world.occupant[moves[r]] = r;
  }
  f.history.push(Array.from(world.robotCell));
  expectNoCollision(f.layout, before, Array.from(world.robotCell), t + 1);
}

function expectNoCollision(layout: Layout, before: number[], after: number[], t: number): void {
  const seen = new Set<number>();
  after.forEach((c, r) => {
    expect(seen.has(c), `vertex collision at tick ${t} in cell ${c}`).toBe(false);
    seen.add(c);
    const from = before[r];
    if (from !== c) {
      const x = from % layout.width;
      const dx = Math.abs((c % layout.width) - x);
      const dy = Math.abs(Math.floor(c / layout.width) - Math.floor(from / layout.width));
      expect(dx + dy, `robot ${r} jumped at tick ${t}`).toBe(1);
      const other = before.indexOf(c);
      if (other >= 0) expect(after[other] === from, `robots ${r} and ${other} swapped at tick ${t}`).toBe(false);
    }
  });
}

const corridor = parseLayout('##########\n#........#\n##########');
const at = (x: number, y = 1) => y * corridor.width + x;

describe('execution through the action dependency graph (hand-worked)', () => {
  it('a robot following one cell behind waits while the robot ahead is held, then follows; both paths are re-timed in the table', () => {
    // Robot 0 drives from x = 3 to 7, robot 1 from x = 2 to 6 right behind it (it enters
    // each cell in the tick robot 0 leaves it). Robot 0's move from x = 4 is held for 3
    // ticks at tick 1: it is at x = 5 at tick 5, x = 6 at 6, x = 7 at 7. Robot 1 may enter
    // x = 4 only when robot 0 has left it: at 5, then 5 at 6, 6 at 7.
    const f = fleet(corridor, [at(3), at(2)]);
    f.table.reserve(0, Int32Array.from([at(3), at(4), at(5), at(6), at(7)]), 0);
    f.table.reserve(1, Int32Array.from([at(2), at(3), at(4), at(5), at(6)]), 0);
    for (let t = 0; t < 10; t++) tick(f, t, t === 1 ? new Map([[0, 3]]) : new Map());
    const x = (r: number, t: number) => f.history[t][r] - corridor.width;
    expect([0, 1, 2, 3, 4, 5, 6, 7].map((t) => x(0, t))).toEqual([3, 4, 4, 4, 4, 5, 6, 7]);
    expect([0, 1, 2, 3, 4, 5, 6, 7].map((t) => x(1, t))).toEqual([2, 3, 3, 3, 3, 4, 5, 6]);
    // The table now says where they will be: both paths end at tick 7.
    expect(f.execution.pathEnd(0)).toBe(7);
    expect(f.execution.pathEnd(1)).toBe(7);
    // One wait imposed on robot 1 (it was not delayed itself), 3 ticks long.
    expect(f.execution.dependencyWaits).toBe(1);
    expect(f.execution.dependencyWaitTicks).toBe(3);
  });

  it('without holds the robots keep the planned timing exactly and no wait is imposed', () => {
    const f = fleet(corridor, [at(3), at(2)]);
    f.table.reserve(0, Int32Array.from([at(3), at(4), at(5), at(6), at(7)]), 0);
    f.table.reserve(1, Int32Array.from([at(2), at(2), at(3), at(4), at(5)]), 0);
    for (let t = 0; t < 6; t++) tick(f, t);
    expect(f.history.map((cells) => cells[0] - corridor.width)).toEqual([3, 4, 5, 6, 7, 7, 7]);
    expect(f.history.map((cells) => cells[1] - corridor.width)).toEqual([2, 2, 3, 4, 5, 5, 5]);
    expect(f.execution.dependencyWaits).toBe(0);
  });

  it('a planned wait absorbs a delay that fits in it', () => {
    // Robot 1 is planned to wait 4 ticks at x = 2 before going; robot 0 is held 2 ticks:
    // robot 1 still leaves on time (robot 0 has gone by then).
    const f = fleet(corridor, [at(3), at(1)]);
    f.table.reserve(0, Int32Array.from([at(3), at(4), at(5), at(6), at(7)]), 0);
    f.table.reserve(1, Int32Array.from([at(1), at(2), at(2), at(2), at(2), at(2), at(3), at(4)]), 0);
    for (let t = 0; t < 9; t++) tick(f, t, t === 0 ? new Map([[0, 2]]) : new Map());
    // Robot 0: held at 3 through tick 2, then 4 at 3, 5 at 4, 6 at 5, 7 at 6.
    expect(f.history.slice(0, 8).map((cells) => cells[0] - corridor.width)).toEqual([3, 3, 3, 4, 5, 6, 7, 7]);
    // Robot 1 enters x = 3 at tick 6 as planned (robot 0 left it at 3).
    expect(f.history.slice(0, 9).map((cells) => cells[1] - corridor.width)).toEqual([1, 2, 2, 2, 2, 2, 3, 4, 4]);
    expect(f.execution.dependencyWaits).toBe(0);
  });

  it('a path planned after a delay slots in where the re-timed table has the cell free: no wait for a robot that is late and far', () => {
    // Two rows. Robot 0 drives along the top row from x = 1 to 8 and is held 20 ticks at
    // tick 1 (at x = 2). At tick 3 robot 1, below x = 5, plans a move up onto robot 0's row
    // and on to rest at (4, 2): the re-timed table shows robot 0 reaching x = 5 only at tick
    // 24, so robot 1's plan crosses the row first, and robot 1 never waits for robot 0.
    const floor = parseLayout('##########\n#........#\n#........#\n##########');
    const c = (x: number, y: number) => y * floor.width + x;
    const f = fleet(floor, [c(1, 1), c(5, 2)]);
    f.table.reserve(0, Int32Array.from([1, 2, 3, 4, 5, 6, 7, 8].map((x) => c(x, 1))), 0);
    const search = new SpaceTimeAStar(floor, f.table);
    for (let t = 0; t < 40; t++) {
      tick(f, t, t === 1 ? new Map([[0, 20]]) : new Map(), () => {
        if (t !== 3) return;
        const goal = c(5, 1);
        const path = search.search({ robot: 1, start: c(5, 2), startTick: 3, goal, heuristic: distanceTable(floor, goal), holdTicks: 0, restForever: false })!;
        const west = search.search({ robot: 1, start: goal, startTick: 3 + path.length - 1, goal: c(4, 2), heuristic: distanceTable(floor, c(4, 2)), holdTicks: 0, restForever: true })!;
        f.table.reserve(1, Int32Array.from([...path, ...west.subarray(1)]), 3);
      });
    }
    // Robot 1 was at (5, 1) at tick 4, long before robot 0 (at x = 5 at tick 24).
    expect(f.history[4][1]).toBe(c(5, 1));
    expect(f.history.findIndex((cells) => cells[0] === c(5, 1))).toBe(24);
    expect(f.execution.dependencyWaits).toBe(0);
    expect(f.history[39]).toEqual([c(8, 1), c(4, 2)]);
  });

  it("robots rotating through each other's cells move together, and all wait when one of them is held", () => {
    // A 2 x 2 block, robots at its four cells rotating clockwise twice.
    const block = parseLayout('####\n#..#\n#..#\n####');
    const c = (x: number, y: number) => y * block.width + x;
    const ring = [c(1, 1), c(2, 1), c(2, 2), c(1, 2)];
    const f = fleet(block, ring);
    for (let r = 0; r < 4; r++) f.table.reserve(r, Int32Array.from([0, 1, 2].map((k) => ring[(r + k) % 4])), 0);
    tick(f, 0);
    expect(f.history[1]).toEqual([ring[1], ring[2], ring[3], ring[0]]);
    tick(f, 1, new Map([[2, 2]]));
    // Robot 2 held: nobody can move (each waits for the next to leave).
    expect(f.history[2]).toEqual(f.history[1]);
    for (let t = 2; t < 6; t++) tick(f, t);
    expect(f.history[6]).toEqual([ring[2], ring[3], ring[0], ring[1]]);
  });
});

describe('execution through the action dependency graph: random plans and random holds (property test, fast-check)', () => {
  it('never collides, delivers every robot to the end of its path, and keeps the plan exactly when nothing is held', () => {
    let held = 0;
    let waits = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 10_000_000 }), fc.boolean(), (seed, holds) => {
        const random = seedrandom(`adg-${seed}`);
        const width = 4 + Math.floor(random() * 5);
        const height = 3 + Math.floor(random() * 3);
        const kind = new Uint8Array(width * height).map(() => (random() < 0.15 ? CellKind.Blocked : CellKind.Floor));
        const layout = buildLayout(width, height, kind);
        const cells = Array.from(layout.floorCells);
        fc.pre(cells.length >= 6);
        const robots = 2 + Math.floor(random() * Math.min(4, cells.length / 3));
        const shuffled = cells.sort(() => random() - 0.5);
        const starts = shuffled.slice(0, robots);
        const f = fleet(layout, starts);
        const search = new SpaceTimeAStar(layout, f.table);
        // Prioritized planning: each robot to a distinct goal, ending in a rest (Silver 2005).
        const goals = shuffled.slice(robots, 2 * robots);
        const planned: (Int32Array | null)[] = [];
        for (let r = 0; r < robots; r++) {
          const path = search.search({ robot: r, start: starts[r], startTick: 0, goal: goals[r], heuristic: distanceTable(layout, goals[r]), holdTicks: 0, restForever: true });
          if (path) f.table.reserve(r, path, 0);
          planned.push(path);
        }
        const horizon = 200;
        for (let t = 0; t < horizon; t++) {
          const hold = new Map<number, number>();
          if (holds) for (let r = 0; r < robots; r++) if (random() < 0.15) hold.set(r, 1 + Math.floor(random() * 4));
          tick(f, t, hold);
          for (const r of hold.keys()) if (f.world.robotHeldUntil[r] > t) held++;
        }
        waits += f.execution.dependencyWaits;
        for (let r = 0; r < robots; r++) {
          const path = planned[r];
          const end = path ? path[path.length - 1] : starts[r];
          expect(f.world.robotCell[r]).toBe(end);
          if (!holds && path) for (let t = 0; t < path.length; t++) expect(f.history[t][r]).toBe(path[t]);
        }
        if (!holds) expect(f.execution.dependencyWaits).toBe(0);
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 300), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
    expect(held).toBeGreaterThan(100);
    expect(waits).toBeGreaterThan(10);
  });
});
