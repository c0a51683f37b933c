/**
 * Benchmark rows for the planners' search (sim/space-time-astar.ts) and reservations
 * (sim/reservation-table.ts). Never part of `npm test`.
 *
 *  - `search-single`: the same single-robot queries without reservations (random pairs of
 *    floor cells, seeded) solved by our search and by the general-purpose `pathfinding` A*
 *    (4-connected, Manhattan heuristic). Ours runs twice: with the Manhattan heuristic (the
 *    same information as the library, so the ratio compares the searches) and with the exact
 *    breadth-first distance table the policies use (tables built beforehand, as the policies
 *    cache them). Expansions are states taken off the open list (for pathfinding: nodes it
 *    closed). `pathfinding` is timed as documented, on a fresh `grid.clone()` per query
 *    (the library keeps search state on the grid's nodes); its time without the clone is
 *    reported too. Path lengths are checked equal.
 *  - `search-token-passing`: token passing on the demo hall under saturated demand (the
 *    policy rows' workload): searches, expansions and wall time per search, measured by
 *    wrapping `SpaceTimeAStar.prototype.find` (the search; `search` copies its path out).
 *  - `search-memory`: one planner (reservation table + search) on a generated 150 x 80 hall
 *    after prioritized planning of one task per robot for 200 robots (the horizon reaches
 *    2,048 ticks): bytes held in typed arrays as computed from their sizes (`memoryBytes`),
 *    and as measured (growth of the process's ArrayBuffer memory across building the
 *    planner and planning, after forced garbage collections). Distance tables are built
 *    before and not counted.
 *
 * Run directly: `npx tsx bench/search.ts [--json] [--quick]`.
 */
import { createRequire } from 'node:module';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import seedrandom from 'seedrandom';
import { loadScenarioFile } from '../scenarios/load.ts';
import { quantileSorted } from '../reports/stats/quantile-sorted.ts';
import { generateSortationHall } from '../scenarios/generate.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { runReplication } from '../sim/engine.ts';
import { DistanceTables, unreachable } from '../sim/distance-table.ts';
import { parseLayout, type Layout } from '../sim/layout.ts';
import { ReservationTable } from '../sim/reservation-table.ts';
import { SpaceTimeAStar } from '../sim/space-time-astar.ts';
import type { Scenario } from '../sim/model.ts';
import { TaskState, World } from '../sim/world.ts';
import { planTask } from '../policies/shared/task-path.ts';

type Row = Record<string, string | number | boolean>;

const require = createRequire(import.meta.url);
interface PathfindingNode {
  closed?: boolean;
}
interface PathfindingGrid {
  clone(): PathfindingGrid;
  nodes: PathfindingNode[][];
}
const PF = require('pathfinding') as {
  Grid: new (width: number, height: number, matrix: number[][]) => PathfindingGrid;
  AStarFinder: new (options: { diagonalMovement: number; heuristic?: (dx: number, dy: number) => number }) => {
    findPath(sx: number, sy: number, ex: number, ey: number, grid: PathfindingGrid): number[][];
  };
  DiagonalMovement: { Never: number };
  Heuristic: { manhattan: (dx: number, dy: number) => number };
};

const demoHall = () => parseLayout(loadScenarioFile('scenarios/demo-sortation.yaml').layoutText);
const bigHall = () => parseLayout(generateSortationHall({ width: 150, height: 80, parking: 1000 }));

function manhattanTable(layout: Layout, goal: number): Int32Array {
  const table = new Int32Array(layout.cellCount).fill(unreachable);
  const gx = goal % layout.width;
  const gy = Math.floor(goal / layout.width);
  for (let c = 0; c < layout.cellCount; c++) {
    if (layout.passable[c]) table[c] = Math.abs((c % layout.width) - gx) + Math.abs(Math.floor(c / layout.width) - gy);
  }
  return table;
}

function median(values: number[]): number {
  return quantileSorted(
    [...values].sort((a, b) => a - b),
    0.5,
  );
}

/** Single-robot queries without reservations: our search against pathfinding's A*. */
export function benchSingleQueries(hallName: string, layout: Layout, queries: number, repeats = 3): Row {
  const random = seedrandom(`search-bench/${hallName}`);
  const distances = new DistanceTables(layout);
  const pairs: [number, number][] = [];
  const floor = layout.floorCells;
  while (pairs.length < queries) {
    const a = floor[Math.floor(random() * floor.length)];
    const b = floor[Math.floor(random() * floor.length)];
    if (a !== b && distances.distance(a, b) < unreachable) pairs.push([a, b]);
  }
  const bfs = pairs.map(([, goal]) => distances.to(goal));
  const manhattan = pairs.map(([, goal]) => manhattanTable(layout, goal));
  const width = layout.width;
  const matrix = Array.from({ length: layout.height }, (_, y) => Array.from({ length: width }, (_, x) => (layout.passable[y * width + x] ? 0 : 1)));
  const grid = new PF.Grid(width, layout.height, matrix);
  const finder = new PF.AStarFinder({ diagonalMovement: PF.DiagonalMovement.Never, heuristic: PF.Heuristic.manhattan });

  const ours = (heuristics: Int32Array[]) => {
    const table = new ReservationTable(layout.cellCount, 1);
    const search = new SpaceTimeAStar(layout, table);
    const lengths: number[] = [];
    const start = performance.now();
    for (let q = 0; q < pairs.length; q++) {
      const [from, goal] = pairs[q];
      table.ensureHorizon(3 * distances.distance(from, goal) + 64);
      const path = search.search({ robot: 0, start: from, startTick: 0, goal, heuristic: heuristics[q], holdTicks: 0, restForever: false });
      lengths.push(path ? path.length - 1 : -1);
    }
    return { ms: performance.now() - start, expansions: search.expansions, lengths };
  };
  const library = () => {
    const lengths: number[] = [];
    let ms = 0;
    let cloneMs = 0;
    let expansions = 0;
    for (const [from, goal] of pairs) {
      const start = performance.now();
      const copy = grid.clone();
      const cloned = performance.now();
      const path = finder.findPath(from % width, Math.floor(from / width), goal % width, Math.floor(goal / width), copy);
      ms += performance.now() - start;
      cloneMs += cloned - start;
      lengths.push(path.length - 1);
      for (const row of copy.nodes) for (const node of row) if (node.closed) expansions++;
    }
    return { ms, cloneMs, expansions, lengths };
  };

  const runs = { manhattan: [] as number[], bfs: [] as number[], library: [] as number[], librarySearch: [] as number[] };
  let last = { manhattan: ours(manhattan), bfs: ours(bfs), library: library() };
  for (let r = 0; r < repeats; r++) {
    last = { manhattan: ours(manhattan), bfs: ours(bfs), library: library() };
    runs.manhattan.push(last.manhattan.ms);
    runs.bfs.push(last.bfs.ms);
    runs.library.push(last.library.ms);
    runs.librarySearch.push(last.library.ms - last.library.cloneMs);
  }
  const equalLengths = last.library.lengths.every((l, i) => l === last.manhattan.lengths[i] && l === last.bfs.lengths[i]);
  const perQuery = (ms: number) => Number(((1000 * ms) / queries).toFixed(2));
  return {
    name: 'search-single',
    hall: hallName,
    cells: layout.floorCells.length,
    queries,
    meanPathCells: Number((last.library.lengths.reduce((a, b) => a + b, 0) / queries).toFixed(1)),
    equalLengths,
    pathfindingExpansionsPerQuery: Number((last.library.expansions / queries).toFixed(1)),
    oursManhattanExpansionsPerQuery: Number((last.manhattan.expansions / queries).toFixed(1)),
    oursTableExpansionsPerQuery: Number((last.bfs.expansions / queries).toFixed(1)),
    expansionRatioManhattan: Number((last.library.expansions / last.manhattan.expansions).toFixed(2)),
    pathfindingMicrosPerQuery: perQuery(median(runs.library)),
    // The library marks search state on the grid's nodes, hence the clone per query.
    pathfindingWithoutCloneMicrosPerQuery: perQuery(median(runs.librarySearch)),
    oursManhattanMicrosPerQuery: perQuery(median(runs.manhattan)),
    oursTableMicrosPerQuery: perQuery(median(runs.bfs)),
    speedupManhattan: Number((median(runs.library) / median(runs.manhattan)).toFixed(2)),
    speedupTable: Number((median(runs.library) / median(runs.bfs)).toFixed(2)),
    speedupManhattanWithoutClone: Number((median(runs.librarySearch) / median(runs.manhattan)).toFixed(2)),
  };
}

/** The demo hall under saturated demand (as the policy rows of bench/run.ts). */
function demo(policy: string, robots: number, hours: number): Scenario {
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { policy, robots, hours, replications: 1 });
  return { ...scenario, demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { skew: 0.6, kind: 'zipf' } } };
}

/** Token passing's searches on the demo hall, timed one by one. */
export function benchTokenPassingSearches(robots: number, hours = 2): Row {
  // `find` is the search itself: `search` (a copied path) calls it, and so does the task planner.
  const prototype = SpaceTimeAStar.prototype;
  const original = prototype.find;
  let searchMs = 0;
  let calls = 0;
  const searchers = new Set<SpaceTimeAStar>();
  prototype.find = function timed(this: SpaceTimeAStar, request) {
    searchers.add(this);
    const start = performance.now();
    const result = original.call(this, request);
    searchMs += performance.now() - start;
    calls++;
    return result;
  };
  try {
    const scenario = demo('token-passing', robots, hours);
    const record = runReplication(prepareSetup(scenario), 0);
    const counters = record.policyCounters;
    return {
      name: 'search-token-passing',
      robots,
      simulatedHours: hours,
      searches: calls,
      expansions: counters.expansions,
      expansionsPerSearch: Number((counters.expansions / calls).toFixed(1)),
      unreachableSkips: counters.unreachableSkips ?? 0,
      // Searches answered by the free path down the distance table, with no state expanded.
      freePaths: [...searchers].reduce((sum, s) => sum + s.freePaths, 0),
      reachabilityPasses: [...searchers].reduce((sum, s) => sum + s.reachabilityPasses, 0),
      microsPerSearch: Number(((1000 * searchMs) / calls).toFixed(2)),
      searchShare: Number((searchMs / 1000 / record.timing.wallSeconds).toFixed(3)),
      agentStepsPerSecond: Math.round(record.agentSteps / record.timing.wallSeconds),
      realTimeFactor: Math.round((hours * 3600) / record.timing.wallSeconds),
      delivered: record.delivered,
      collisions: record.collisions,
    };
  } finally {
    prototype.find = original;
  }
}

/** One planner after prioritized planning of one task per robot on a 150 x 80 hall. */
export function benchPlannerMemory(robots = 200): Row {
  setFlagsFromString('--expose-gc');
  const collect = runInNewContext('gc') as () => void;
  // Backing stores of dead ArrayBuffers are freed as the collector sweeps; a few full
  // collections make the count settle.
  const gc = () => {
    for (let i = 0; i < 4; i++) collect();
  };
  const layoutText = generateSortationHall({ width: 150, height: 80, parking: 1000 });
  const layout = parseLayout(layoutText);
  const distances = new DistanceTables(layout);
  const world = new World(layout, robots);
  const random = seedrandom('search-bench/memory');
  for (let r = 0; r < robots; r++) world.robotCell[r] = layout.parking[r];
  // Tables first, so their memory is not counted as the planner's.
  for (const c of [...layout.pickups, ...layout.drops]) distances.to(c);
  const tasks: number[] = [];
  for (let r = 0; r < robots; r++) {
    const pickup = layout.pickups[Math.floor(random() * layout.pickups.length)];
    const drop = layout.drops[Math.floor(random() * layout.drops.length)];
    tasks.push(world.addTask(0, pickup, drop, -1, 4, 3, 0, TaskState.Open));
  }
  gc();
  const before = process.memoryUsage().arrayBuffers;
  const table = new ReservationTable(layout.cellCount, robots);
  const search = new SpaceTimeAStar(layout, table);
  for (let r = 0; r < robots; r++) table.rest(r, world.robotCell[r], 0);
  const planner = { world, table, search, distances };
  let planned = 0;
  const start = performance.now();
  for (let r = 0; r < robots; r++) {
    const cell = world.robotCell[r];
    table.release(r, 0);
    const plan = planTask(planner, r, cell, 0, tasks[r]);
    if (plan) {
      table.reserve(r, plan.path, 0);
      planned++;
    } else {
      table.rest(r, cell, 0);
    }
  }
  const ms = performance.now() - start;
  gc();
  const measured = process.memoryUsage().arrayBuffers - before;
  return {
    name: 'search-memory',
    hall: '150x80',
    cells: layout.cellCount,
    robots,
    planned,
    horizon: table.horizon,
    computedMegabytes: Number(((table.memoryBytes() + search.memoryBytes()) / 1e6).toFixed(2)),
    measuredMegabytes: Number((measured / 1e6).toFixed(2)),
    planningMillis: Number(ms.toFixed(1)),
    expansions: search.expansions,
  };
}

export function benchSearch(quick = false): Row[] {
  const rows: Row[] = [];
  rows.push(benchSingleQueries('demo', demoHall(), quick ? 300 : 1000));
  rows.push(benchSingleQueries('150x80', bigHall(), quick ? 100 : 300));
  for (const robots of [40, 200]) rows.push(benchTokenPassingSearches(robots));
  rows.push(benchPlannerMemory());
  return rows;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const rows = benchSearch(process.argv.includes('--quick'));
  if (process.argv.includes('--json')) process.stdout.write(`${JSON.stringify(rows, null, 2)}\n`);
  else for (const row of rows) process.stdout.write(`${JSON.stringify(row)}\n`);
}
