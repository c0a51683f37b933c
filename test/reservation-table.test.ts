import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { foreverTick, ReservationTable } from '../sim/reservation-table.ts';

/**
 * The reservation table's queries against a naive model written from its contract (a set of
 * (robot, cell, tick) entries and one rest per cell, Silver 2005 / Ma et al. AAMAS 2017):
 * reserve writes a path's entries from the current tick on and a rest at its last cell,
 * release drops a robot's entries from a tick on and its rest. Random operation sequences,
 * queries only at or after the current tick (earlier entries are history).
 */
class NaiveTable {
  /** Entries written: robot, cell, tick and the reservation (path) that wrote them. */
  readonly entries: { robot: number; cell: number; tick: number; path: number }[] = [];
  readonly rests = new Map<number, { robot: number; from: number }>();
  readonly paths = new Map<number, { start: number; cells: number[]; id: number }>();
  now = 0;
  private ids = 0;
  constructor(readonly cells: number) {}

  reserve(robot: number, cells: number[], start: number, now: number): void {
    if (now > this.now) {
      this.now = now;
      // Entries before the current tick are history; no query asks for them.
      for (let i = this.entries.length - 1; i >= 0; i--) if (this.entries[i].tick < now) this.entries.splice(i, 1);
    }
    this.release(robot, now);
    const id = this.ids++;
    for (let i = Math.max(0, this.now - start); i < cells.length; i++) this.entries.push({ robot, cell: cells[i], tick: start + i, path: id });
    this.rests.set(cells[cells.length - 1], { robot, from: start + cells.length - 1 });
    this.paths.set(robot, { start, cells, id });
  }

  /** Drops the robot's current path's entries at ticks >= from (older paths' entries stay) and its rest. */
  release(robot: number, from: number): void {
    const path = this.paths.get(robot);
    if (!path) return;
    for (let i = this.entries.length - 1; i >= 0; i--) {
      const e = this.entries[i];
      if (e.path === path.id && e.tick >= from) this.entries.splice(i, 1);
    }
    const last = path.cells[path.cells.length - 1];
    if (this.rests.get(last)?.robot === robot) this.rests.delete(last);
    this.paths.delete(robot);
  }

  holders(cell: number, tick: number): number[] {
    return this.entries.filter((e) => e.cell === cell && e.tick === tick).map((e) => e.robot);
  }

  isFree(cell: number, tick: number, self: number): boolean {
    if (this.holders(cell, tick).some((r) => r !== self)) return false;
    const rest = this.rests.get(cell);
    return !rest || rest.robot === self || rest.from > tick;
  }

  /** Free for `self` with robot `ignored`'s entries and rest left out too. */
  isFreeExcept(cell: number, tick: number, self: number, ignored: number): boolean {
    if (this.holders(cell, tick).some((r) => r !== self && r !== ignored)) return false;
    const rest = this.rests.get(cell);
    return !rest || rest.robot === self || rest.robot === ignored || rest.from > tick;
  }

  positionAt(robot: number, tick: number): number {
    const p = this.paths.get(robot);
    if (!p || tick < p.start) return -1;
    return p.cells[Math.min(tick - p.start, p.cells.length - 1)];
  }
}

describe('ReservationTable against a naive model (property test, fast-check)', () => {
  it('answers isFree, holder, swaps, mayStep, isFreeFrom, isFreeDuring, safeIntervals, earliestStay, positionAt and restCell like the model', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 1_000_000 }), (seed) => {
        const random = seedrandom(`table-${seed}`);
        const cells = 2 + Math.floor(random() * 6);
        const robots = 1 + Math.floor(random() * 4);
        const table = new ReservationTable(cells, robots, 8);
        const model = new NaiveTable(cells);
        let now = 0;
        const lo = new Int32Array(64);
        const hi = new Int32Array(64);
        for (let op = 0; op < 30; op++) {
          if (random() < 0.3) now += Math.floor(random() * 3);
          const robot = Math.floor(random() * robots);
          const r = random();
          if (r < 0.55) {
            // A path from up to 3 ticks ago (a restored older path) or from now.
            const start = Math.max(0, now - Math.floor(random() * 4));
            const length = 1 + Math.floor(random() * 8);
            const path = Array.from({ length }, () => Math.floor(random() * cells));
            for (let i = 1; i < length; i++) if (random() < 0.5) path[i] = path[i - 1];
            table.reserve(robot, Int32Array.from(path), start, now);
            model.reserve(robot, path, start, now);
          } else if (r < 0.8) {
            const from = now + Math.floor(random() * 4);
            table.release(robot, from);
            model.release(robot, from);
          } else {
            const cell = Math.floor(random() * cells);
            table.rest(robot, cell, now);
            model.reserve(robot, [cell], now, now);
          }
          // Queries at or after the latest current tick.
          const base = model.now;
          for (let q = 0; q < 6; q++) {
            const cell = Math.floor(random() * cells);
            const tick = base + Math.floor(random() * 12);
            const self = Math.floor(random() * (robots + 1)) - (random() < 0.2 ? 1 : 0);
            expect(table.isFree(cell, tick, self)).toBe(model.isFree(cell, tick, self));
            const holders = model.holders(cell, tick);
            const rest = model.rests.get(cell);
            const expectedHolders = holders.length > 0 ? holders : rest && rest.from <= tick ? [rest.robot] : [-1];
            expect(expectedHolders).toContain(table.holder(cell, tick));
            const to = tick + Math.floor(random() * 5);
            let during = true;
            for (let t = tick; t <= to; t++) during &&= model.isFree(cell, t, self);
            expect(table.isFreeDuring(cell, tick, to, self)).toBe(during);
            let onwards = !(rest && rest.robot !== self);
            for (let t = tick; t <= base + 40; t++) onwards &&= model.isFree(cell, t, self);
            expect(table.isFreeFrom(cell, tick, self)).toBe(onwards);
            // Safe intervals: the maximal free runs from `tick` on, the last one endless unless a rest ends it.
            const count = table.safeIntervals(cell, tick, self, lo, hi, 0);
            expect(count).toBeLessThanOrEqual(table.listLength[cell] + 1);
            const runs: [number, number][] = [];
            for (let t = tick; t <= base + 40; t++) {
              if (!model.isFree(cell, t, self)) continue;
              if (runs.length > 0 && runs[runs.length - 1][1] === t - 1) runs[runs.length - 1][1] = t;
              else runs.push([t, t]);
            }
            if (runs.length > 0 && runs[runs.length - 1][1] === base + 40) runs[runs.length - 1][1] = foreverTick;
            expect(Array.from({ length: count }, (_, i) => [lo[i], hi[i]])).toEqual(runs);
            // The earliest stay: the first a >= max(k, tick) with [a, a + hold] free for self
            // when another robot's reservations are left out as well (past the last entry a
            // cell stays as it is: free, or held by a rest for good).
            const ignored = Math.floor(random() * robots);
            const hold = Math.floor(random() * 4);
            const k = tick + Math.floor(random() * 6) - 2;
            let stay = foreverTick;
            for (let a = Math.max(k, tick); a <= base + 40 && stay === foreverTick; a++) {
              let free = true;
              for (let t = a; t <= a + hold; t++) free &&= model.isFreeExcept(cell, t, self, ignored);
              if (free) stay = a;
            }
            expect(table.earliestStay(cell, tick, k, hold, self, ignored)).toBe(stay);
            const neighbour = Math.floor(random() * cells);
            // The walk's one-pass step test answers as the two queries it stands for (each checked against the model here).
            for (const toFree of [false, true]) {
              expect(table.mayStep(neighbour, cell, tick, self, toFree)).toBe((toFree || table.isFree(cell, tick + 1, self)) && !table.swaps(neighbour, cell, tick, self));
            }
            const other = expectedHolders[0];
            if (holders.length <= 1) {
              const swap = neighbour !== cell && other >= 0 && other !== self && model.positionAt(other, tick + 1) === neighbour;
              expect(table.swaps(neighbour, cell, tick, self)).toBe(swap);
            }
          }
          for (let rr = 0; rr < robots; rr++) {
            const tick = base + Math.floor(random() * 10);
            expect(table.positionAt(rr, tick)).toBe(model.positionAt(rr, tick));
            const p = model.paths.get(rr);
            expect(table.restCell(rr)).toBe(p ? p.cells[p.cells.length - 1] : -1);
          }
        }
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 300), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
  });

  it('keeps one entry per run of ticks on a cell and drops entries that ended before the current tick', () => {
    const table = new ReservationTable(4, 2);
    // Robot 0 waits 10 ticks on cell 1, then moves to 2: two runs, two entries.
    table.reserve(0, Int32Array.from([1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 2]), 0);
    expect(table.listLength[1]).toBe(1);
    expect(table.listLength[2]).toBe(1);
    // Ticks later, a new path through cell 1 drops the entry that ended at tick 9.
    table.reserve(1, Int32Array.from([0, 1]), 20);
    expect(table.listLength[1]).toBe(1);
    expect(table.holder(1, 21)).toBe(1);
    // The table grows its horizon for long paths without allocating per tick.
    const before = table.memoryBytes();
    table.reserve(0, new Int32Array(5000).fill(3), 30);
    expect(table.horizon).toBeGreaterThan(5000);
    expect(table.memoryBytes() - before).toBeLessThan(5000 * 4 + 1024);
  });

  it('answers for every cell and tick when cell lists outgrow their blocks and the pool is repacked', () => {
    // 32 robots on a ring of 64 cells, robot r at cell (2r + t) mod 64 at tick t: at most one
    // robot per cell and tick, 100 runs per cell over 200 ticks (blocks move and the pool of
    // 1,024 slots is repacked several times). Then the odd robots' paths are released from
    // tick 50 on: their cells are free from then, their earlier ticks stay.
    const cells = 64;
    const robots = 32;
    const table = new ReservationTable(cells, robots, 256);
    const ringPath = (r: number) => Int32Array.from({ length: 200 }, (_, k) => (2 * r + k) % cells);
    for (let r = 0; r < robots; r++) table.reserve(r, ringPath(r), 0, 0);
    const expectedHolder = (cell: number, tick: number, released: boolean) => {
      for (let r = 0; r < robots; r++) {
        if (released && r % 2 === 1 && tick >= 50) continue;
        if ((2 * r + Math.min(tick, 199)) % cells === cell) return r;
      }
      return -1;
    };
    for (let t = 0; t < 220; t++) for (let c = 0; c < cells; c++) expect(table.holder(c, t)).toBe(expectedHolder(c, t, false));
    for (let r = 1; r < robots; r += 2) table.release(r, 50);
    for (let t = 0; t < 220; t++) for (let c = 0; c < cells; c++) expect(table.holder(c, t)).toBe(expectedHolder(c, t, true));
  });
});
