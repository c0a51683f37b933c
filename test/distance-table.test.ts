import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import seedrandom from 'seedrandom';
import { buildLayout, CellKind } from '../sim/layout.ts';
import { DistanceTables, distanceTable, unreachable } from '../sim/distance-table.ts';

// Outside reference: the `pathfinding` npm library (BreadthFirstFinder on a 4-connected grid,
// diagonal movement off), an independent implementation of grid shortest paths
// (REFERENCES.md, "Grid shortest paths").
const require = createRequire(import.meta.url);
const PF = require('pathfinding') as {
  Grid: new (width: number, height: number, matrix: number[][]) => { clone(): unknown };
  BreadthFirstFinder: new (options: { allowDiagonal: boolean }) => { findPath(sx: number, sy: number, ex: number, ey: number, grid: unknown): number[][] };
};

function randomGrid(random: () => number, width: number, height: number, density: number): Uint8Array {
  const kind = new Uint8Array(width * height);
  for (let c = 0; c < kind.length; c++) kind[c] = random() < density ? CellKind.Blocked : CellKind.Floor;
  return kind;
}

describe('distanceTable', () => {
  it('equals the path lengths the pathfinding library finds on 120 random grids', () => {
    const random = seedrandom('distance-tables');
    const finder = new PF.BreadthFirstFinder({ allowDiagonal: false });
    let compared = 0;
    let unreachableSeen = 0;
    for (let g = 0; g < 120; g++) {
      const width = 3 + Math.floor(random() * 22);
      const height = 3 + Math.floor(random() * 14);
      const kind = randomGrid(random, width, height, 0.1 + random() * 0.3);
      const layout = buildLayout(width, height, kind);
      if (layout.floorCells.length < 2) continue;
      const matrix = Array.from({ length: height }, (_, y) => Array.from({ length: width }, (_, x) => (kind[y * width + x] === CellKind.Blocked ? 1 : 0)));
      const grid = new PF.Grid(width, height, matrix);
      for (let k = 0; k < 6; k++) {
        const target = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
        const table = distanceTable(layout, target);
        for (let s = 0; s < 8; s++) {
          const source = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
          const path = finder.findPath(source % width, Math.floor(source / width), target % width, Math.floor(target / width), grid.clone());
          if (path.length === 0) {
            expect(table[source]).toBe(unreachable);
            unreachableSeen++;
          } else {
            expect(table[source]).toBe(path.length - 1);
          }
          compared++;
        }
      }
    }
    expect(compared).toBeGreaterThan(4000);
    expect(unreachableSeen).toBeGreaterThan(0);
  });

  it('the bounded cache evicts the least recently used table and rebuilds it on demand', () => {
    const layout = buildLayout(30, 30, new Uint8Array(900).fill(CellKind.Floor));
    const tables = new DistanceTables(layout, 16 * 4 * 900);
    expect(tables.capacity).toBe(16);
    for (let t = 0; t < 20; t++) tables.to(t);
    expect(tables.builds).toBe(20);
    tables.to(19);
    expect(tables.builds).toBe(20);
    tables.to(0);
    expect(tables.builds).toBe(21);
    expect(tables.distance(0, 899)).toBe(58);
  });
});
