import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { buildLayout, CellKind } from '../sim/layout.ts';
import { distanceTable } from '../sim/distance-table.ts';
import { ReservationTable } from '../sim/reservation-table.ts';
import { SpaceTimeAStar } from '../sim/space-time-astar.ts';

/**
 * The production search (safe-interval path planning, Phillips & Likhachev, ICRA 2011) must
 * find the same earliest arrival as a plain space-time A* over (cell, tick) states (Silver
 * 2005), which the paper proves for unit-duration moves and waits. The reference below is
 * written from the definitions only: its own grid neighbours, its own reservation model (a
 * set of "cell@tick" entries plus rests from a tick on), a Manhattan heuristic, vertex and
 * swap collisions as in Stern et al., SoCS 2019. It shares no code with sim/.
 */

interface Instance {
  width: number;
  height: number;
  blocked: boolean[];
  /** Other robots' paths: cells at consecutive ticks from `start`, then a rest forever at the last cell. */
  others: { start: number; cells: number[] }[];
  /** A path of the searching robot itself (its own reservations never block it), or null. */
  own: { start: number; cells: number[] } | null;
  horizon: number;
  query: { start: number; startTick: number; goal: number; holdTicks: number; restForever: boolean };
}

const searcher = 9;

/** Independent model of the reservations: who holds a cell at a tick. */
class ReferenceReservations {
  private readonly held = new Map<string, number>();
  private readonly rests = new Map<number, { robot: number; from: number }>();
  private readonly paths = new Map<number, { start: number; cells: number[] }>();

  add(robot: number, start: number, cells: number[]): void {
    cells.forEach((cell, i) => this.held.set(`${cell}@${start + i}`, robot));
    this.rests.set(cells[cells.length - 1], { robot, from: start + cells.length - 1 });
    this.paths.set(robot, { start, cells });
  }

  holderAt(cell: number, tick: number): number {
    const h = this.held.get(`${cell}@${tick}`);
    if (h !== undefined) return h;
    const rest = this.rests.get(cell);
    return rest && rest.from <= tick ? rest.robot : -1;
  }

  positionOf(robot: number, tick: number): number {
    const p = this.paths.get(robot);
    if (!p || tick < p.start) return -1;
    return p.cells[Math.min(tick - p.start, p.cells.length - 1)];
  }

  freeFor(cell: number, tick: number, self: number): boolean {
    const h = this.holderAt(cell, tick);
    return h < 0 || h === self;
  }

  /** Another robot at `to` at tick moves to `from` at tick + 1. */
  swapWith(from: number, to: number, tick: number, self: number): boolean {
    const other = this.holderAt(to, tick);
    return other >= 0 && other !== self && this.positionOf(other, tick + 1) === from;
  }

  freeForever(cell: number, tick: number, self: number, lastTick: number): boolean {
    const rest = this.rests.get(cell);
    if (rest && rest.robot !== self) return false;
    for (let t = tick; t <= lastTick; t++) if (!this.freeFor(cell, t, self)) return false;
    return true;
  }
}

function neighboursOf(instance: Floor, cell: number): number[] {
  const { width, height, blocked } = instance;
  const x = cell % width;
  const y = Math.floor(cell / width);
  const out: number[] = [];
  if (y > 0) out.push(cell - width);
  if (x < width - 1) out.push(cell + 1);
  if (y < height - 1) out.push(cell + width);
  if (x > 0) out.push(cell - 1);
  return out.filter((c) => !blocked[c]);
}

/** Plain space-time A* (Manhattan heuristic, closed set of (cell, tick)): the earliest arrival tick, or null. */
function referenceArrival(instance: Instance, reservations: ReferenceReservations, lastReservedTick: number, self = searcher): number | null {
  const { start, startTick, goal, holdTicks, restForever } = instance.query;
  const lastTick = startTick + instance.horizon - 2 - (restForever ? 0 : holdTicks);
  const holds = (t: number) => {
    if (restForever) return reservations.freeForever(goal, t, self, Math.max(t, lastReservedTick + 1));
    for (let k = t; k <= t + holdTicks; k++) if (!reservations.freeFor(goal, k, self)) return false;
    return true;
  };
  if (start === goal) return holds(startTick) ? startTick : null;
  const w = instance.width;
  const h = (c: number) => Math.abs((c % w) - (goal % w)) + Math.abs(Math.floor(c / w) - Math.floor(goal / w));
  const open: { cell: number; tick: number; f: number }[] = [{ cell: start, tick: startTick, f: startTick + h(start) }];
  const closed = new Set<string>([`${start}@${startTick}`]);
  while (open.length > 0) {
    let best = 0;
    for (let i = 1; i < open.length; i++) if (open[i].f < open[best].f) best = i;
    const { cell, tick } = open.splice(best, 1)[0];
    if (cell === goal) return tick;
    const next = tick + 1;
    if (next > lastTick) continue;
    for (const n of [cell, ...neighboursOf(instance, cell)]) {
      const key = `${n}@${next}`;
      if (closed.has(key)) continue;
      if (!reservations.freeFor(n, next, self)) continue;
      if (n !== cell && reservations.swapWith(cell, n, tick, self)) continue;
      // The goal is terminal: entered only when the goal condition holds.
      if (n === goal && !holds(next)) continue;
      closed.add(key);
      open.push({ cell: n, tick: next, f: next + h(n) });
    }
  }
  return null;
}

type Floor = Pick<Instance, 'width' | 'height' | 'blocked'>;

function randomFloor(random: () => number): (Floor & { floor: number[] }) | null {
  const width = 3 + Math.floor(random() * 6);
  const height = 2 + Math.floor(random() * 5);
  const density = random() * 0.3;
  const blocked = Array.from({ length: width * height }, () => random() < density);
  const floor = blocked.flatMap((b, c) => (b ? [] : [c]));
  return floor.length < 3 ? null : { width, height, blocked, floor };
}

/**
 * A random walk for `robot` that avoids the robots in `model` (vertex, swap, rests) and ends
 * where no later tick of theirs comes, so the reservations stay consistent; null if it cannot.
 * `restChance`: probability of a path of one cell (a robot at rest at once).
 */
function randomWalk(random: () => number, floor: Floor & { floor: number[] }, model: ReferenceReservations, robot: number, maxLength: number, restChance = 0): { start: number; cells: number[] } | null {
  const start = Math.floor(random() * 4);
  let cell = floor.floor[Math.floor(random() * floor.floor.length)];
  if (!model.freeFor(cell, start, robot) || !freeOnwards(model, cell, start, robot)) return null;
  const cells = [cell];
  const length = random() < restChance ? 1 : 1 + Math.floor(random() * maxLength);
  for (let i = 1; i < length; i++) {
    const t = start + i;
    const options = [cell, ...neighboursOf(floor, cell)].filter((n) => model.freeFor(n, t, robot) && !(n !== cell && model.swapWith(cell, n, t - 1, robot)));
    if (options.length === 0) break;
    // Waits are likelier than in a plain walk, so cells carry runs of ticks.
    const wait = random() < 0.3 && options.includes(cell);
    if (!wait) cell = options[Math.floor(random() * options.length)];
    cells.push(cell);
  }
  // Its rest must not cross another robot's later ticks.
  if (!freeOnwards(model, cells[cells.length - 1], start + cells.length - 1, robot)) return null;
  return { start, cells };
}

function randomQuery(random: () => number, floor: Floor & { floor: number[] }, model: ReferenceReservations, self = searcher): Instance['query'] | null {
  const pick = () => floor.floor[Math.floor(random() * floor.floor.length)];
  const startTick = Math.floor(random() * 6);
  const start = pick();
  if (!model.freeFor(start, startTick, self)) return null;
  const goal = random() < 0.1 ? start : pick();
  return { start, startTick, goal, holdTicks: Math.floor(random() * 4), restForever: random() < 0.35 };
}

function randomInstance(seed: number): Instance | null {
  const random = seedrandom(`sipp-${seed}`);
  const floor = randomFloor(random);
  if (!floor) return null;
  const model = new ReferenceReservations();
  const horizon = [8, 16, 32, 256][Math.floor(random() * 4)];
  const others: Instance['others'] = [];
  const robots = Math.floor(random() * 5);
  for (let r = 0; r < robots; r++) {
    const path = randomWalk(random, floor, model, others.length, Math.min(horizon - 2, 18));
    if (!path) continue;
    model.add(others.length, path.start, path.cells);
    others.push(path);
  }
  // The searcher's own reservations, consistent with the others (as in the policies).
  const own = random() < 0.3 ? randomWalk(random, floor, model, searcher, Math.min(horizon - 2, 18)) : null;
  const query = randomQuery(random, floor, model);
  if (!query) return null;
  return { width: floor.width, height: floor.height, blocked: floor.blocked, others, own, horizon, query };
}

/** No robot other than `self` holds `cell` at `tick` or later. */
function freeOnwards(model: ReferenceReservations, cell: number, tick: number, self: number): boolean {
  return model.freeForever(cell, tick, self, tick + 64);
}

function productionFor(instance: Instance) {
  const kind = new Uint8Array(instance.width * instance.height).map((_, c) => (instance.blocked[c] ? CellKind.Blocked : CellKind.Floor));
  const layout = buildLayout(instance.width, instance.height, kind);
  const table = new ReservationTable(layout.cellCount, searcher + 1, instance.horizon);
  instance.others.forEach((p, r) => table.reserve(r, Int32Array.from(p.cells), p.start, 0));
  if (instance.own) table.reserve(searcher, Int32Array.from(instance.own.cells), instance.own.start, 0);
  const search = new SpaceTimeAStar(layout, table);
  return { layout, table, search };
}

describe('safe-interval search against a plain space-time A* (property test, fast-check)', () => {
  it('finds the same earliest arrival on random small floors with random reservations, and its paths collide with none', () => {
    let compared = 0;
    let found = 0;
    let waited = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 10_000_000 }), (seed) => {
        const instance = randomInstance(seed);
        fc.pre(instance !== null);
        const inst = instance!;
        const { layout, table, search } = productionFor(inst);
        // The horizon is an input of both searches (reserving long paths may have raised it).
        inst.horizon = table.horizon;
        const model = new ReferenceReservations();
        inst.others.forEach((p, r) => model.add(r, p.start, p.cells));
        const lastReserved = Math.max(0, ...inst.others.map((p) => p.start + p.cells.length));
        const { start, startTick, goal, holdTicks, restForever } = inst.query;
        const expected = referenceArrival(inst, model, lastReserved);
        const path = search.search({ robot: searcher, start, startTick, goal, heuristic: distanceTable(layout, goal), holdTicks, restForever });
        compared++;
        expect(path === null ? null : startTick + path.length - 1).toBe(expected);
        if (!path) return;
        found++;
        // Collision-free against the reservations, checked with the reference model.
        expect(path[0]).toBe(start);
        expect(path[path.length - 1]).toBe(goal);
        for (let k = 1; k < path.length; k++) {
          const t = startTick + k;
          const [a, b] = [path[k - 1], path[k]];
          if (a === b) waited++;
          expect(a === b || neighboursOf(inst, a).includes(b)).toBe(true);
          expect(model.freeFor(b, t, searcher)).toBe(true);
          expect(a !== b && model.swapWith(a, b, t - 1, searcher)).toBe(false);
          if (k < path.length - 1) expect(b).not.toBe(goal);
        }
        const arrival = startTick + path.length - 1;
        if (restForever) expect(model.freeForever(goal, arrival, searcher, arrival + lastReserved + 2)).toBe(true);
        else for (let t = arrival; t <= arrival + holdTicks; t++) expect(model.freeFor(goal, t, searcher)).toBe(true);
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 600), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
    // The instances must exercise the interesting cases, not only trivial ones.
    expect(compared).toBeGreaterThanOrEqual(400);
    expect(found).toBeGreaterThan(compared / 3);
    expect(waited).toBeGreaterThan(20);
  });

  it('agrees with the reference over sequences of searches on one table that changes between them (reachability labels kept across searches)', () => {
    let compared = 0;
    let reusedSkips = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 10_000_000 }), (seed) => {
        const random = seedrandom(`sipp-sequence-${seed}`);
        const floor = randomFloor(random);
        fc.pre(floor !== null);
        const f = floor!;
        const kind = new Uint8Array(f.width * f.height).map((_, c) => (f.blocked[c] ? CellKind.Blocked : CellKind.Floor));
        const layout = buildLayout(f.width, f.height, kind);
        const robots = 8;
        const table = new ReservationTable(layout.cellCount, robots, 64);
        // Label at once, so the labels are built early and reused by later searches.
        const search = new SpaceTimeAStar(layout, table, 200_000, 0);
        const live = new Map<number, { start: number; cells: number[] }>();
        // The reservations as robot `self` sees them: its own never block it.
        const modelOf = (self: number) => {
          const model = new ReferenceReservations();
          for (const [r, p] of live) if (r !== self) model.add(r, p.start, p.cells);
          return model;
        };
        for (let step = 0; step < 24; step++) {
          const robot = Math.floor(random() * robots);
          if (random() < 0.4) {
            // Replace (or drop) one robot's path; many are rests of one cell, which block.
            live.delete(robot);
            table.release(robot, 0);
            const path = random() < 0.8 ? randomWalk(random, f, modelOf(-1), robot, 10, 0.5) : null;
            if (path) {
              live.set(robot, path);
              table.reserve(robot, Int32Array.from(path.cells), path.start, 0);
            }
            continue;
          }
          // Any robot may search, as in the policies (one searcher per table).
          const self = Math.floor(random() * robots);
          const model = modelOf(self);
          const query = randomQuery(random, f, model, self);
          if (!query) continue;
          const instance: Instance = { ...f, others: [], own: null, horizon: table.horizon, query };
          const lastReserved = Math.max(0, ...[...live.values()].map((p) => p.start + p.cells.length));
          const expected = referenceArrival(instance, model, lastReserved, self);
          const { start, startTick, goal, holdTicks, restForever } = query;
          const [skipsBefore, passesBefore] = [search.unreachableSkips, search.reachabilityPasses];
          const path = search.search({ robot: self, start, startTick, goal, heuristic: distanceTable(layout, goal), holdTicks, restForever });
          expect(path === null ? null : startTick + path.length - 1).toBe(expected);
          compared++;
          // Ended by labels built in an earlier search, on a table changed since.
          if (search.unreachableSkips > skipsBefore && search.reachabilityPasses === passesBefore) reusedSkips++;
        }
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 300), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
    expect(compared).toBeGreaterThan(1000);
    expect(reusedSkips).toBeGreaterThan(10);
  });

  it('waits longer for the lazy check while no recent search was unreachable (hand-worked)', () => {
    // 40 x 3 floor (120 cells); robots 0-2 rest on column 30, a wall between the searcher at
    // (2, 1) and the goal (35, 1), distance 33. The region left of the wall holds 90 states, so
    // the lazy check ends each search. A fresh search (no unreachable search yet) checks once
    // it has expanded 16 + 33 + 120 / 4 = 79 states: at the 80th. After that one, with the wall
    // moved (the labels no longer hold) and a recent unreachable search, it checks after
    // 16 + 33 + 120 / 32 = 52: at the 53rd.
    const width = 40;
    const at = (x: number, y: number) => y * width + x;
    const layout = buildLayout(width, 3, new Uint8Array(width * 3).fill(CellKind.Floor));
    const table = new ReservationTable(layout.cellCount, searcher + 1, 256);
    const search = new SpaceTimeAStar(layout, table);
    for (const [r, c] of [[0, at(30, 0)], [1, at(30, 1)], [2, at(30, 2)]]) table.rest(r, c, 0);
    const request = { robot: searcher, start: at(2, 1), startTick: 0, goal: at(35, 1), heuristic: distanceTable(layout, at(35, 1)), holdTicks: 0, restForever: false };
    expect(search.search(request)).toBeNull();
    expect(search.unreachableSkips).toBe(1);
    expect(search.expansions).toBe(80);
    table.rest(1, at(31, 1), 0);
    expect(search.search(request)).toBeNull();
    expect(search.unreachableSkips).toBe(2);
    expect(search.expansions).toBe(80 + 53);
  });

  it('on a crowded floor, after many unreachable searches, checks reachability before searching, with the reference results', () => {
    // 40 x 3 floor; robots 0-2 rest on column 30, a wall between the searcher (robot 9 at
    // (2, 1)) and the goals at column 35. Hand-worked: every goal there is unreachable until
    // the wall opens.
    const width = 40;
    const at = (x: number, y: number) => y * width + x;
    const floor: Floor = { width, height: 3, blocked: new Array(width * 3).fill(false) };
    const layout = buildLayout(width, 3, new Uint8Array(width * 3).fill(CellKind.Floor));
    const table = new ReservationTable(layout.cellCount, searcher + 1, 256);
    const search = new SpaceTimeAStar(layout, table);
    const rests = new Map<number, number>([[0, at(30, 0)], [1, at(30, 1)], [2, at(30, 2)]]);
    for (const [r, c] of rests) table.rest(r, c, 0);
    const ask = (goal: number) => {
      const model = new ReferenceReservations();
      for (const [r, c] of rests) model.add(r, 0, [c]);
      const query = { start: at(2, 1), startTick: 0, goal, holdTicks: 0, restForever: false };
      const expected = referenceArrival({ ...floor, others: [], own: null, horizon: table.horizon, query }, model, 1);
      const path = search.search({ robot: searcher, ...query, heuristic: distanceTable(layout, goal) });
      expect(path === null ? null : path.length - 1).toBe(expected);
      return path;
    };
    for (let k = 0; k < 8; k++) expect(ask(at(35, k % 3))).toBeNull();
    expect(search.unreachableSkips).toBe(8);
    // The wall moves but still closes the floor; the labels no longer hold, the pass decides.
    table.rest(1, at(31, 1), 0);
    rests.set(1, at(31, 1));
    const passes = search.reachabilityPasses;
    const expansions = search.expansions;
    expect(ask(at(35, 1))).toBeNull();
    expect(search.reachabilityPasses).toBe(passes + 1);
    expect(search.expansions).toBe(expansions);
    // The wall opens at (30, 2): reachable, 35 - 2 + 1 = 34 ticks (one step down, 33 across).
    table.rest(2, at(29, 0), 0);
    rests.set(2, at(29, 0));
    expect(ask(at(35, 2))?.length).toBe(35);
  });
});

/**
 * Forward-only robots that turn in place (sim/headings.ts): the search over (cell, heading,
 * safe interval) must find the same earliest arrival as a plain space-time A* over (cell,
 * heading, tick) states, written here from the definitions: a robot faces N, E, S or W,
 * moves one cell ahead per tick or waits, and a quarter turn keeps it on its cell for
 * `turnTicks` ticks (the cell must be free for it at each of them). A robot still turning
 * or held at the start acts only from `readyTick`. Same reservation model as above.
 */
const headingStep = (width: number, heading: number) => [-width, 1, width, -1][heading];

function neighbourAhead(floor: Floor, cell: number, heading: number): number {
  const { width, height, blocked } = floor;
  const x = cell % width;
  const y = Math.floor(cell / width);
  const [nx, ny] = [x + [0, 1, 0, -1][heading], y + [-1, 0, 1, 0][heading]];
  if (nx < 0 || ny < 0 || nx >= width || ny >= height) return -1;
  const n = cell + headingStep(width, heading);
  return blocked[n] ? -1 : n;
}

function referenceArrivalWithHeadings(instance: Instance, reservations: ReferenceReservations, lastReservedTick: number, turnTicks: number, startHeading: number, readyTick: number, self = searcher): number | null {
  const { start, startTick, goal, holdTicks, restForever } = instance.query;
  const lastTick = startTick + instance.horizon - 2 - (restForever ? 0 : holdTicks);
  const holds = (t: number) => {
    if (restForever) return reservations.freeForever(goal, t, self, Math.max(t, lastReservedTick + 1));
    for (let k = t; k <= t + holdTicks; k++) if (!reservations.freeFor(goal, k, self)) return false;
    return true;
  };
  if (start === goal) return holds(startTick) ? startTick : null;
  // The robot stays on its start cell until it can act.
  for (let t = startTick + 1; t <= readyTick; t++) if (!reservations.freeFor(start, t, self)) return null;
  const w = instance.width;
  const h = (c: number) => Math.abs((c % w) - (goal % w)) + Math.abs(Math.floor(c / w) - Math.floor(goal / w));
  const open: { cell: number; heading: number; tick: number; f: number }[] = [{ cell: start, heading: startHeading, tick: readyTick, f: readyTick + h(start) }];
  const closed = new Set<string>([`${start}/${startHeading}@${readyTick}`]);
  const add = (cell: number, heading: number, tick: number) => {
    const key = `${cell}/${heading}@${tick}`;
    if (closed.has(key)) return;
    closed.add(key);
    open.push({ cell, heading, tick, f: tick + h(cell) });
  };
  while (open.length > 0) {
    let best = 0;
    for (let i = 1; i < open.length; i++) if (open[i].f < open[best].f) best = i;
    const { cell, heading, tick } = open.splice(best, 1)[0];
    if (cell === goal) return tick;
    const next = tick + 1;
    if (next > lastTick) continue;
    // Wait.
    if (reservations.freeFor(cell, next, self)) add(cell, heading, next);
    // Forward.
    const ahead = neighbourAhead(instance, cell, heading);
    if (ahead >= 0 && reservations.freeFor(ahead, next, self) && !reservations.swapWith(cell, ahead, tick, self) && (ahead !== goal || holds(next))) add(ahead, heading, next);
    // Quarter turns: the cell must stay free for the robot at every tick of the turn.
    if (tick + turnTicks <= lastTick) {
      let free = true;
      for (let t = next; t <= tick + turnTicks; t++) if (!reservations.freeFor(cell, t, self)) free = false;
      if (free) for (const side of [1, 3]) add(cell, (heading + side) & 3, tick + turnTicks);
    }
  }
  return null;
}

/** Checks that a path is drivable forward-only: before every move the robot had the ticks to turn to the move's direction. */
function forwardOnlyTurnsFit(width: number, path: Int32Array, startHeading: number, readyOffset: number, turnTicks: number): boolean {
  let heading = startHeading;
  let runStart = readyOffset;
  for (let k = 1; k < path.length; k++) {
    if (path[k] === path[k - 1]) continue;
    const direction = [-width, 1, width, -1].indexOf(path[k] - path[k - 1]);
    const quarter = ((direction - heading) & 3) === 3 ? 1 : (direction - heading) & 3;
    // Ticks standing on the cell since the robot could act there, before the move at k - 1 -> k.
    if (k - 1 - runStart < quarter * turnTicks) return false;
    heading = direction;
    runStart = k;
  }
  return true;
}

describe('safe-interval search with headings against a space-time A* over (cell, heading, tick) (property test, fast-check)', () => {
  it('finds the same earliest arrival for forward-only robots that turn in place, with paths that leave time for every turn', () => {
    let compared = 0;
    let found = 0;
    let turned = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 10_000_000 }), fc.integer({ min: 1, max: 3 }), fc.integer({ min: 0, max: 3 }), fc.integer({ min: 0, max: 3 }), (seed, turnTicks, startHeading, readyDelay) => {
        const instance = randomInstance(seed);
        fc.pre(instance !== null);
        const inst = instance!;
        const { layout, table } = productionFor(inst);
        const search = new SpaceTimeAStar(layout, table, 200_000, 16, turnTicks);
        inst.horizon = table.horizon;
        const model = new ReferenceReservations();
        inst.others.forEach((p, r) => model.add(r, p.start, p.cells));
        const lastReserved = Math.max(0, ...inst.others.map((p) => p.start + p.cells.length));
        const { start, startTick, goal, holdTicks, restForever } = inst.query;
        const readyTick = startTick + readyDelay;
        const expected = referenceArrivalWithHeadings(inst, model, lastReserved, turnTicks, startHeading, readyTick);
        const path = search.search({ robot: searcher, start, startTick, goal, heuristic: distanceTable(layout, goal), holdTicks, restForever, startHeading, readyTick });
        compared++;
        expect(path === null ? null : startTick + path.length - 1).toBe(expected);
        if (!path) return;
        found++;
        expect(path[0]).toBe(start);
        expect(path[path.length - 1]).toBe(goal);
        if (start !== goal) expect(forwardOnlyTurnsFit(inst.width, path, startHeading, readyDelay, turnTicks)).toBe(true);
        let heading = startHeading;
        for (let k = 1; k < path.length; k++) {
          const t = startTick + k;
          const [a, b] = [path[k - 1], path[k]];
          expect(a === b || neighboursOf(inst, a).includes(b)).toBe(true);
          expect(model.freeFor(b, t, searcher)).toBe(true);
          expect(a !== b && model.swapWith(a, b, t - 1, searcher)).toBe(false);
          if (k < path.length - 1) expect(b).not.toBe(goal);
          if (a !== b) {
            const direction = [-inst.width, 1, inst.width, -1].indexOf(b - a);
            if (direction !== heading) turned++;
            heading = direction;
          }
        }
        // The heading the search reports at the goal is the last move's.
        if (start !== goal && path.length > 1) expect(search.lastHeading).toBe(heading);
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 600), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
    expect(compared).toBeGreaterThanOrEqual(400);
    expect(found).toBeGreaterThan(compared / 3);
    expect(turned).toBeGreaterThan(50);
  });

  it('with turnTicks 0 it is the search without headings, expansion for expansion', () => {
    for (let seed = 0; seed < 300; seed++) {
      const instance = randomInstance(seed);
      if (!instance) continue;
      const a = productionFor(instance);
      const b = productionFor(instance);
      const withHeadings = new SpaceTimeAStar(b.layout, b.table, 200_000, 16, 0);
      const { start, startTick, goal, holdTicks, restForever } = instance.query;
      const heuristic = distanceTable(a.layout, goal);
      const plain = a.search.search({ robot: searcher, start, startTick, goal, heuristic, holdTicks, restForever });
      const zero = withHeadings.search({ robot: searcher, start, startTick, goal, heuristic, holdTicks, restForever, startHeading: 2 });
      expect(zero === null ? null : Array.from(zero)).toEqual(plain === null ? null : Array.from(plain));
      expect(withHeadings.expansions).toBe(a.search.expansions);
    }
  });

  it('a robot facing away from its goal down a corridor turns twice before it drives (hand-worked)', () => {
    // 1 x 6 corridor, robot at x = 0 facing west (a wall), goal at x = 5, quarter turn 2
    // ticks: turn to north then east (4 ticks, both walls, still allowed: turning needs no
    // room), then 5 moves: arrival at tick 9.
    const layout = buildLayout(6, 1, new Uint8Array(6).fill(CellKind.Floor));
    const table = new ReservationTable(layout.cellCount, 1, 64);
    const search = new SpaceTimeAStar(layout, table, 200_000, 16, 2);
    const path = search.search({ robot: 0, start: 0, startTick: 0, goal: 5, heuristic: distanceTable(layout, 5), holdTicks: 0, restForever: false, startHeading: 3, readyTick: 0 });
    expect(path === null ? null : Array.from(path)).toEqual([0, 0, 0, 0, 0, 1, 2, 3, 4, 5]);
    expect(search.lastHeading).toBe(1);
  });
});

/** Steps to another cell along a path (a wait or a turn is not one). */
function movesOf(path: Int32Array): number {
  let moves = 0;
  for (let i = 1; i < path.length; i++) if (path[i] !== path[i - 1]) moves++;
  return moves;
}

describe('safe-interval search: the tie order among equal arrivals', () => {
  it('a robot early for a taken goal waits on its way instead of driving the slack off (hand-worked)', () => {
    // Open 7 x 5 floor. Robot 0 stands on the goal (5, 2) for ticks 0-9, then steps east to
    // (6, 2) at tick 10 and rests there. Robot 1 starts at (1, 2) at tick 0, 4 cells west of
    // the goal: the earliest arrival is tick 10 (the goal is free from then on), so 6 ticks
    // are slack. Every path arriving at tick 10 is optimal; the search takes the one with the
    // fewest moves: 4 steps east along the row (no other path has 4 moves) and 6 waits, at
    // (4, 2) next to the goal, where the deeper-state order reaches first. A detour to burn
    // the slack (north first, as the deeper-first order alone did) would make 10 moves.
    const width = 7;
    const at = (x: number, y: number) => y * width + x;
    const layout = buildLayout(width, 5, new Uint8Array(width * 5).fill(CellKind.Floor));
    const table = new ReservationTable(layout.cellCount, 2, 64);
    table.reserve(0, Int32Array.from([...Array(10).fill(at(5, 2)), at(6, 2)]), 0, 0);
    const search = new SpaceTimeAStar(layout, table);
    const path = search.search({ robot: 1, start: at(1, 2), startTick: 0, goal: at(5, 2), heuristic: distanceTable(layout, at(5, 2)), holdTicks: 0, restForever: false });
    expect(path === null ? null : Array.from(path)).toEqual([at(1, 2), at(2, 2), at(3, 2), ...Array(7).fill(at(4, 2)), at(5, 2)]);
    // The same with forward-only robots starting north-facing (quarter turn 1 tick): the
    // robot turns east and drives, and a turn is not a move, so the path makes its 4 moves
    // and arrives at tick 10 (driving north first, straight ahead, would add 2 moves).
    const turning = new SpaceTimeAStar(layout, table, 200_000, 16, 1);
    const turned = turning.search({ robot: 1, start: at(1, 2), startTick: 0, goal: at(5, 2), heuristic: distanceTable(layout, at(5, 2)), holdTicks: 0, restForever: false, startHeading: 0 });
    expect(turned === null ? null : { length: turned.length, moves: movesOf(turned) }).toEqual({ length: 11, moves: 4 });
  });
});

describe('safe-interval search with a deadline (property test, fast-check)', () => {
  it('returns the search without deadline path for path when the reference arrival is before the deadline, else nothing, and stops doomed searches early', () => {
    // The reference arrival is the plain space-time A* above (Silver 2005), sharing no code
    // with sim/; the deadline is set around it, so both sides of "arrives in time" are hit.
    let inTime = 0;
    let late = 0;
    let stoppedEarly = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 10_000_000 }), fc.integer({ min: 0, max: 3 }), fc.integer({ min: -3, max: 2 }), (seed, turnTicks, offset) => {
        const instance = randomInstance(seed);
        fc.pre(instance !== null);
        const inst = instance!;
        const { layout, table } = productionFor(inst);
        inst.horizon = table.horizon;
        const model = new ReferenceReservations();
        inst.others.forEach((p, r) => model.add(r, p.start, p.cells));
        const lastReserved = Math.max(0, ...inst.others.map((p) => p.start + p.cells.length));
        const { start, startTick, goal, holdTicks, restForever } = inst.query;
        const startHeading = seed & 3;
        const expected = turnTicks === 0 ? referenceArrival(inst, model, lastReserved) : referenceArrivalWithHeadings(inst, model, lastReserved, turnTicks, startHeading, startTick);
        // Around the arrival when there is one, else anywhere after the start.
        const deadline = expected === null ? startTick + 3 + offset : expected + 1 + offset;
        const heuristic = distanceTable(layout, goal);
        const plain = new SpaceTimeAStar(layout, table, 200_000, 16, turnTicks);
        const bounded = new SpaceTimeAStar(layout, table, 200_000, 16, turnTicks);
        const request = { robot: searcher, start, startTick, goal, heuristic, holdTicks, restForever, startHeading, readyTick: startTick };
        const full = plain.search(request);
        const cut = bounded.search({ ...request, deadline });
        expect(full === null ? null : startTick + full.length - 1).toBe(expected);
        if (expected !== null && expected < deadline) {
          inTime++;
          expect(cut === null ? null : Array.from(cut)).toEqual(Array.from(full!));
          expect(bounded.lastHeading).toBe(plain.lastHeading);
          expect(bounded.deadlineStops).toBe(0);
        } else {
          late++;
          expect(cut).toBeNull();
          if (bounded.expansions < plain.expansions) stoppedEarly++;
        }
        expect(bounded.expansions).toBeLessThanOrEqual(plain.expansions);
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 600), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
    expect(inTime).toBeGreaterThan(100);
    expect(late).toBeGreaterThan(100);
    expect(stoppedEarly).toBeGreaterThan(20);
  });
});
