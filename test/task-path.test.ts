/**
 * freeParkingSpots (policies/shared/task-path.ts): the nearest rest spots that no robot's
 * path ends on, written into a short buffer without allocating. Checked against sorting
 * every free spot by (grid distance, position in the list), with distances from the
 * `pathfinding` library's breadth-first finder (REFERENCES.md, grid shortest paths).
 */
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { DistanceTables } from '../sim/distance-table.ts';
import { buildLayout, CellKind } from '../sim/layout.ts';
import { ReservationTable } from '../sim/reservation-table.ts';
import { freeParkingSpots } from '../policies/shared/task-path.ts';

const require = createRequire(import.meta.url);
const PF = require('pathfinding') as {
  Grid: new (width: number, height: number, matrix: number[][]) => { clone(): unknown };
  BreadthFirstFinder: new (options: { allowDiagonal: boolean }) => { findPath(sx: number, sy: number, ex: number, ey: number, grid: unknown): number[][] };
};

describe('freeParkingSpots', () => {
  it('gives the nearest free spots, ties to the earlier in the list, on random floors (fast-check)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 1_000_000 }), fc.integer({ min: 1, max: 5 }), (seed, bufferSize) => {
        const random = seedrandom(`spots-${seed}`);
        const width = 4 + Math.floor(random() * 9);
        const height = 3 + Math.floor(random() * 7);
        const kind = new Uint8Array(width * height);
        for (let c = 0; c < kind.length; c++) kind[c] = random() < 0.25 ? CellKind.Blocked : CellKind.Floor;
        const layout = buildLayout(width, height, kind);
        fc.pre(layout.floorCells.length >= 3);
        const floor = Array.from(layout.floorCells);
        const from = floor[Math.floor(random() * floor.length)];
        // Spots in a random order (the list order breaks ties), some taken by a robot's rest.
        const spots = floor.filter(() => random() < 0.5).sort(() => random() - 0.5);
        const table = new ReservationTable(layout.cellCount, spots.length + 1);
        let robot = 0;
        for (const c of spots) if (random() < 0.3) table.rest(robot++, c, 0);
        const matrix = Array.from({ length: height }, (_, y) => Array.from({ length: width }, (_, x) => (kind[y * width + x] === CellKind.Blocked ? 1 : 0)));
        const grid = new PF.Grid(width, height, matrix);
        const distance = (c: number): number => {
          const path = new PF.BreadthFirstFinder({ allowDiagonal: false }).findPath(from % width, Math.floor(from / width), c % width, Math.floor(c / width), grid.clone());
          return path.length === 0 ? Infinity : path.length - 1;
        };
        const expected = spots
          .map((c, index) => ({ c, index, d: c === from ? 0 : distance(c) }))
          .filter((s) => table.endRobot[s.c] < 0 && Number.isFinite(s.d))
          .sort((a, b) => a.d - b.d || a.index - b.index)
          .slice(0, bufferSize)
          .map((s) => s.c);
        const out = new Int32Array(bufferSize);
        const count = freeParkingSpots(Int32Array.from(spots), new DistanceTables(layout), table, from, out);
        expect(Array.from(out.subarray(0, count))).toEqual(expected);
      }),
      { numRuns: 200, seed: 20261201 },
    );
  });
});
