import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { buildLayout, CellKind } from '../sim/layout.ts';
import { distanceTable } from '../sim/distance-table.ts';
import { ReservationTable } from '../sim/reservation-table.ts';
import { SpaceTimeAStar, type SearchRequest } from '../sim/space-time-astar.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { prepareSetup } from '../experiments/replications.ts';
import { runReplication } from '../sim/engine.ts';

/**
 * The search first walks the states one step closer and one tick later, depth first, for a
 * path as short as the distance table allows (sim/space-time-astar.ts, `freeShortestPath`).
 * That shortcut must return the very path the safe-interval search (Phillips & Likhachev,
 * ICRA 2011) returns without it, cell for cell, not only one as short: policies' outputs stay
 * byte-identical. The search itself is checked against a plain space-time A* written from
 * the definitions in space-time-search.test.ts; here the same search with the shortcut off
 * is the reference.
 */

/**
 * The path that always takes the first free neighbour one step closer (no going back), or
 * null: only to tell whether the shortcut's answer needed its backtracking.
 */
function firstChoicePath(layout: ReturnType<typeof buildLayout>, table: ReservationTable, request: SearchRequest): Int32Array | null {
  const { heuristic, start, startTick, robot, goal } = request;
  const path = [start];
  let cell = start;
  while (cell !== goal) {
    const tick = startTick + path.length - 1;
    let next = -1;
    for (let d = 0; d < 4 && next < 0; d++) {
      const n = layout.neighbors[cell * 4 + d];
      if (n >= 0 && heuristic[n] === heuristic[cell] - 1 && (n === goal || table.isFree(n, tick + 1, robot)) && !table.swaps(cell, n, tick, robot)) next = n;
    }
    if (next < 0) return null;
    path.push(next);
    cell = next;
  }
  return Int32Array.from(path);
}

function same(a: Int32Array | null, b: Int32Array | null): boolean {
  if (a === null || b === null) return a === b;
  return a.length === b.length && a.every((c, i) => c === b[i]);
}

describe('walk over the shortest states before the search', () => {
  it('returns the search\'s own path on random floors crowded with reserved paths', () => {
    let compared = 0;
    let answered = 0;
    let backtracked = 0;
    let searched = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 10_000_000 }), (seed) => {
        const random = seedrandom(`free-path-${seed}`);
        const width = 4 + Math.floor(random() * 9);
        const height = 3 + Math.floor(random() * 7);
        const kind = new Uint8Array(width * height).map(() => (random() < random() * 0.25 ? CellKind.Blocked : CellKind.Floor));
        const layout = buildLayout(width, height, kind);
        const floor = layout.floorCells;
        fc.pre(floor.length >= 4);
        const pick = () => floor[Math.floor(random() * floor.length)];
        const robots = 1 + Math.floor(random() * 14);
        const table = new ReservationTable(layout.cellCount, robots + 1, 64);
        // Random walks with waits (overlaps are allowed: the table's queries stay defined).
        for (let r = 0; r < robots; r++) {
          let cell = pick();
          const cells = [cell];
          const length = random() < 0.3 ? 1 : 1 + Math.floor(random() * 30);
          for (let i = 1; i < length; i++) {
            if (random() > 0.3) {
              const options = [0, 1, 2, 3].map((d) => layout.neighbors[cell * 4 + d]).filter((n) => n >= 0);
              if (options.length > 0) cell = options[Math.floor(random() * options.length)];
            }
            cells.push(cell);
          }
          table.reserve(r, Int32Array.from(cells), Math.floor(random() * 4), 0);
        }
        const withShortcut = new SpaceTimeAStar(layout, table);
        const without = new SpaceTimeAStar(layout, table);
        without.freePathFirst = false;
        const self = robots;
        for (let q = 0; q < 8; q++) {
          const goal = pick();
          const restForever = random() < 0.4;
          const request: SearchRequest = {
            robot: self,
            start: pick(),
            startTick: Math.floor(random() * 12),
            goal,
            heuristic: distanceTable(layout, goal),
            holdTicks: Math.floor(random() * 4),
            restForever,
          };
          const before = withShortcut.freePaths;
          const fast = withShortcut.search(request);
          const reference = without.search(request);
          expect(same(fast, reference)).toBe(true);
          compared++;
          if (withShortcut.freePaths > before) {
            answered++;
            if (!same(fast, firstChoicePath(layout, table, request))) backtracked++;
          } else if (reference !== null && reference.length > 2) searched++;
        }
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 400), seed: Number(process.env.PROPERTY_SEED ?? 20261202) },
    );
    // Both sides must be exercised: answered by the shortcut (some only after going back),
    // and found only by searching.
    expect(compared).toBeGreaterThan(2000);
    expect(answered).toBeGreaterThan(compared / 10);
    expect(backtracked).toBeGreaterThan(20);
    expect(searched).toBeGreaterThan(compared / 20);
  });

  it('gives token passing on the demo hall the same path for every search as the search alone', () => {
    // The bench's workload (40 robots, saturated demand) for 15 simulated minutes: each
    // search is repeated by a second search object on the same table with the shortcut off.
    // `find` is the search itself (`search` copies its path out; the task planner calls `find`).
    const prototype = SpaceTimeAStar.prototype;
    const original = prototype.find;
    const references = new Map<SpaceTimeAStar, SpaceTimeAStar>();
    let compared = 0;
    let answered = 0;
    let differing = 0;
    let backtracked = 0;
    const pathOf = (search: SpaceTimeAStar, length: number) => (length < 0 ? null : search.path.slice(0, length));
    prototype.find = function checked(this: SpaceTimeAStar, request: SearchRequest) {
      const before = this.freePaths;
      const length = original.call(this, request);
      if (this.freePaths > before) {
        answered++;
        const result = pathOf(this, length);
        let reference = references.get(this);
        if (!reference) {
          const self = this as unknown as { layout: ConstructorParameters<typeof SpaceTimeAStar>[0]; table: ReservationTable };
          reference = new SpaceTimeAStar(self.layout, self.table, this.maxExpansions, this.reachabilityAfter, this.turnTicks);
          reference.freePathFirst = false;
          references.set(this, reference);
        }
        if (!same(result, pathOf(reference, original.call(reference, request)))) differing++;
        const self = this as unknown as { layout: ReturnType<typeof buildLayout>; table: ReservationTable };
        if (!same(result, firstChoicePath(self.layout, self.table, request))) backtracked++;
      }
      compared++;
      return length;
    };
    try {
      const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { robots: 40, hours: 0.25, replications: 1 });
      const record = runReplication(prepareSetup({ ...scenario, demand: { kind: 'saturated', mode: 'delivery', pickups: { kind: 'uniform' }, drops: { skew: 0.6, kind: 'zipf' } } }), 0);
      expect(record.collisions).toBe(0);
    } finally {
      prototype.find = original;
    }
    expect(differing).toBe(0);
    expect(compared).toBeGreaterThan(500);
    expect(answered).toBeGreaterThan(compared / 10);
    expect(backtracked).toBeGreaterThan(20);
  });
});
