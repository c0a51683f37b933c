import { createRequire } from 'node:module';
import seedrandom from 'seedrandom';
import { describe, expect, it } from 'vitest';
import { DistanceFields, type DistanceField } from '../sim/distance-field.ts';
import { distanceTable, unreachable } from '../sim/distance-table.ts';
import { GoalProgress } from '../sim/goal-progress.ts';
import { buildLayout, CellKind, parseLayout, type Layout } from '../sim/layout.ts';

// Outside reference: the `pathfinding` npm library (BreadthFirstFinder, 4-connected, no
// diagonals), an independent implementation of grid shortest paths; the full breadth-first
// table of sim/distance-table.ts is checked against the same library in distance-table.test.ts.
const require = createRequire(import.meta.url);
const PF = require('pathfinding') as {
  Grid: new (width: number, height: number, matrix: number[][]) => { clone(): unknown };
  BreadthFirstFinder: new (options: { allowDiagonal: boolean }) => { findPath(sx: number, sy: number, ex: number, ey: number, grid: unknown): number[][] };
};

function randomLayout(random: () => number, width: number, height: number, density: number): { layout: Layout; kind: Uint8Array } {
  const kind = new Uint8Array(width * height);
  for (let c = 0; c < kind.length; c++) kind[c] = random() < density ? CellKind.Blocked : CellKind.Floor;
  return { layout: buildLayout(width, height, kind), kind };
}

/**
 * Compares every cell the field covers with the full table (reachability, distance mod 4,
 * neighbour ranks); returns how many cells were compared and the first disagreement, if any.
 */
function disagreement(layout: Layout, field: DistanceField, table: Int32Array): { checked: number; first: string | null } {
  let checked = 0;
  const fail = (what: string) => ({ checked, first: what });
  for (const c of layout.floorCells) {
    if (!field.covers(c)) continue;
    checked++;
    if (field.reaches(c) !== table[c] < unreachable) return fail(`reaches(${c})`);
    if (table[c] >= unreachable) {
      if (field.coversAround(c) && field.rankAround(c) !== -1) return fail(`rankAround(${c}) of a cell cut off from the goal`);
      continue;
    }
    if (field.mod4(c) !== (table[c] & 3)) return fail(`mod4(${c}) = ${field.mod4(c)}, table ${table[c]}`);
    if (!field.coversAround(c)) {
      if (field.rankAround(c) !== -2) return fail(`rankAround(${c}) on the window's edge`);
      continue;
    }
    const farther = field.rankAround(c);
    for (let d = 0; d < 4; d++) {
      const n = layout.neighbors[c * 4 + d];
      if (n < 0) continue;
      if (field.step(c, n) !== table[n] - table[c]) return fail(`step(${c}, ${n})`);
      if (((farther >> d) & 1) !== (table[n] > table[c] ? 1 : 0)) return fail(`rankAround(${c}) bit ${d}`);
    }
  }
  return { checked, first: null };
}

function expectAgrees(layout: Layout, field: DistanceField, table: Int32Array): number {
  const { checked, first } = disagreement(layout, field, table);
  expect(first).toBeNull();
  return checked;
}

describe('DistanceFields (windowed exact fields: tight cells from a bitmap, the rest by search)', () => {
  it('agrees with full breadth-first tables on every covered cell of 150 random floors, windows of margin 1', () => {
    // Margin 1 makes windows tight, so many shortest paths leave them: the searches for cells
    // that are not tight run over the whole floor and must still find them.
    const random = seedrandom('distance-fields');
    let checked = 0;
    let searches = 0;
    let windowed = 0;
    for (let g = 0; g < 150; g++) {
      const width = 4 + Math.floor(random() * 30);
      const height = 4 + Math.floor(random() * 20);
      const { layout } = randomLayout(random, width, height, 0.1 + random() * 0.35);
      if (layout.floorCells.length < 2) continue;
      const fields = new DistanceFields(layout, undefined, 1);
      for (let k = 0; k < 5; k++) {
        const goal = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
        const table = distanceTable(layout, goal);
        for (let q = 0; q < 4; q++) {
          const near = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
          const field = fields.to(goal, near);
          expect(field.coversAround(near)).toBe(true);
          if (field.width * field.height < width * height) windowed++;
          const result = disagreement(layout, field, table);
          if (result.first !== null) expect.fail(`floor ${g}, goal ${goal}, near ${near}: ${result.first}`);
          checked += result.checked;
        }
      }
      searches += fields.searches;
    }
    expect(checked).toBeGreaterThan(20000);
    // The suite exercises both kinds of cell: tight ones, and ones that needed a search.
    expect(searches).toBeGreaterThan(1000);
    expect(windowed).toBeGreaterThan(500);
  });

  it('marks a cell tight exactly when its distance is its Manhattan distance, on floors up to 140 columns wide (windows across 32-bit words)', () => {
    // The bitmap is filled 32 columns at a time from windows that start at any column, so
    // floors wider than a word, goals on every bit position and every margin are exercised.
    // Reference: the full breadth-first table (checked against the pathfinding library in
    // distance-table.test.ts) and the Manhattan distance.
    const random = seedrandom('distance-fields-tight');
    let tight = 0;
    let loose = 0;
    for (let g = 0; g < 60; g++) {
      const width = 33 + Math.floor(random() * 108);
      const height = 3 + Math.floor(random() * 12);
      const { layout } = randomLayout(random, width, height, 0.05 + random() * 0.3);
      if (layout.floorCells.length < 2) continue;
      const fields = new DistanceFields(layout, undefined, Math.floor(random() * 9));
      for (let k = 0; k < 4; k++) {
        const goal = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
        const near = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
        const table = distanceTable(layout, goal);
        const field = fields.to(goal, near);
        const gx = goal % width;
        const gy = Math.floor(goal / width);
        for (const c of layout.floorCells) {
          if (!field.covers(c)) continue;
          const x = c % width;
          const y = Math.floor(c / width);
          const manhattan = Math.abs(x - gx) + Math.abs(y - gy);
          if (field.tightXY(x, y) !== (table[c] === manhattan)) expect.fail(`floor ${g}, goal ${goal}, cell ${c}: tight ${field.tightXY(x, y)}, table ${table[c]}, Manhattan ${manhattan}`);
          if (table[c] === manhattan) tight++;
          else loose++;
        }
        const result = disagreement(layout, field, table);
        if (result.first !== null) expect.fail(`floor ${g}, goal ${goal}, near ${near}: ${result.first}`);
      }
    }
    expect(tight).toBeGreaterThan(10000);
    expect(loose).toBeGreaterThan(10000);
  });

  it('on a maze where few cells are tight, a field takes one whole-floor search, stays exact, and hands it on when enlarged', () => {
    // A serpentine: 40 corridors of 101 cells joined at alternate ends; from the goal at one
    // end almost no cell is tight, so searching cell by cell would walk the corridors again
    // and again.
    const rows: string[] = [];
    for (let y = 0; y < 79; y++) {
      if (y % 2 === 0) rows.push('.'.repeat(101));
      else if (y % 4 === 1) rows.push('#'.repeat(100) + '.');
      else rows.push('.' + '#'.repeat(100));
    }
    const layout = parseLayout(rows.join('\n'));
    const goal = 0;
    const table = distanceTable(layout, goal);
    const fields = new DistanceFields(layout, undefined, 2);
    const small = fields.to(goal, 4 * 101 + 3);
    expect(small.width * small.height).toBeLessThan(layout.cellCount / 10);
    expect(small.searchedWholeFloor).toBe(true);
    expect(fields.wholeFloorSearches).toBe(1);
    expectAgrees(layout, small, table);
    // Asked about a far cell, the larger field covers the whole floor and takes the same distances.
    const whole = fields.to(goal, 78 * 101 + 100);
    expect(whole.width * whole.height).toBe(layout.cellCount);
    expect(fields.wholeFloorSearches).toBe(1);
    expectAgrees(layout, whole, table);
    expect(fields.searches).toBe(0);
  });

  it('a field whose searches go over their budget takes the whole-floor search and stays exact', () => {
    // A floor mostly open (most cells tight) with a wall that shadows a strip behind it: 200 x
    // 60, the goal at 100:50 below a wall along row 48 from column 60 to 140. The window for a
    // robot at 199:59 (margin 8) is columns 92-199, rows 42-59; its cells above the wall are
    // not tight (a path goes round an end of the wall), under half of the window's floor, so
    // each one asked about costs a search, and the budget (1,024 expansions here) runs out.
    const rows: string[] = [];
    for (let y = 0; y < 60; y++) rows.push(y === 48 ? '.'.repeat(60) + '#'.repeat(81) + '.'.repeat(59) : '.'.repeat(200));
    const layout = parseLayout(rows.join('\n'));
    const goal = 50 * 200 + 100;
    const table = distanceTable(layout, goal);
    const fields = new DistanceFields(layout, undefined, 8);
    const field = fields.to(goal, 59 * 200 + 199);
    expect(field.searchedWholeFloor).toBe(false);
    expect(fields.searchBudget).toBe(1024);
    const before = field.bytes;
    expectAgrees(layout, field, table);
    expect(fields.searches).toBeGreaterThan(0);
    expect(fields.wholeFloorSearches).toBe(1);
    expect(field.searchedWholeFloor).toBe(true);
    expect(field.bytes).toBeGreaterThan(before);
  });

  it('gives the distance around a wall that cuts the window in two, searching outside the window', () => {
    // Goal at 2:4, robot at 12:4; the wall in column 7 is open only in rows 0-1, outside the
    // window (rows 3-5 with margin 1). By hand: up 3 rows to row 1, 10 columns west, down 3
    // rows = 16 cells (Manhattan distance 10).
    const rows = ['...............', '...............'];
    for (let y = 2; y < 9; y++) rows.push('.......#.......');
    const layout = parseLayout(rows.join('\n'));
    const goal = 4 * 15 + 2;
    const robot = 4 * 15 + 12;
    const fields = new DistanceFields(layout, undefined, 1);
    const field = fields.to(goal, robot);
    expect([field.y0, field.height]).toEqual([3, 3]);
    expect(field.tightXY(12, 4)).toBe(false);
    expect(field.reaches(robot)).toBe(true);
    expect(field.distance(robot)).toBe(16);
    expect(field.mod4(robot)).toBe(16 % 4);
    expect(fields.searches).toBeGreaterThan(0);
    // Moving north from the robot is one step closer (the way round the wall goes north).
    expect(field.step(robot, robot - 15)).toBe(-1);
    expect(field.step(robot, robot - 1)).toBe(-1);
    expect(field.step(robot, robot + 15)).toBe(1);
  });

  it('needs no search on an open floor: every cell is tight', () => {
    const layout = parseLayout(Array.from({ length: 30 }, () => '.'.repeat(60)).join('\n'));
    const fields = new DistanceFields(layout, undefined, 2);
    const field = fields.to(10 * 60 + 5, 20 * 60 + 40);
    // Columns 3..42, rows 8..22: 40 x 15 cells, a third of the floor.
    expect([field.x0, field.y0, field.width, field.height]).toEqual([3, 8, 40, 15]);
    expect(fields.cellsSearched).toBe(40 * 15);
    expectAgrees(layout, field, distanceTable(layout, 10 * 60 + 5));
    expect(fields.searches).toBe(0);
    // 15 rows of two 32-bit words.
    expect(field.bytes).toBe(15 * 2 * 4);
  });

  it('asked about a cell outside its window, a field grows and still covers what it covered', () => {
    const layout = parseLayout(Array.from({ length: 40 }, () => '.'.repeat(40)).join('\n'));
    const fields = new DistanceFields(layout, undefined, 2);
    const goal = 5 * 40 + 5;
    const first = fields.to(goal, 8 * 40 + 9);
    const covered = layout.floorCells.filter((c) => first.covers(c));
    const second = fields.to(goal, 35 * 40 + 30);
    expect(second).not.toBe(first);
    expect(fields.enlargements).toBe(1);
    for (const c of covered) expect(second.covers(c)).toBe(true);
    expect(expectAgrees(layout, second, distanceTable(layout, goal))).toBeGreaterThan(covered.length);
    // A cell inside the cached window reuses it.
    expect(fields.to(goal, 6 * 40 + 6)).toBe(second);
  });

  it('with extra cells closed (a caller-owned passable array) agrees with the pathfinding library on the floor with those cells walled, the goal open', () => {
    // PIBT's detour fields close the cells of robots fixed for long; the reference is the
    // pathfinding library's breadth-first search on the grid with those cells as walls (the
    // goal itself stays open: a robot heads for a goal a fixed robot holds up to its side).
    const random = seedrandom('distance-fields-closed');
    const finder = new PF.BreadthFirstFinder({ allowDiagonal: false });
    let compared = 0;
    let cutOff = 0;
    let searches = 0;
    for (let g = 0; g < 60; g++) {
      const width = 5 + Math.floor(random() * 25);
      const height = 5 + Math.floor(random() * 15);
      const { layout, kind } = randomLayout(random, width, height, 0.15);
      if (layout.floorCells.length < 4) continue;
      const passable = Uint8Array.from(layout.passable);
      const fields = new DistanceFields(layout, undefined, 1, passable);
      for (let round = 0; round < 3; round++) {
        passable.set(layout.passable);
        for (const c of layout.floorCells) if (random() < 0.12) passable[c] = 0;
        fields.clear();
        expect(fields.size).toBe(0);
        for (let s = 0; s < 6; s++) {
          const goal = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
          const matrix = Array.from({ length: height }, (_, y) =>
            Array.from({ length: width }, (_, x) => {
              const c = y * width + x;
              return kind[c] === CellKind.Blocked || (passable[c] === 0 && c !== goal) ? 1 : 0;
            }),
          );
          const grid = new PF.Grid(width, height, matrix);
          for (let q = 0; q < 4; q++) {
            const source = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
            if (passable[source] === 0 && source !== goal) continue;
            const field = fields.to(goal, source);
            const path = finder.findPath(source % width, Math.floor(source / width), goal % width, Math.floor(goal / width), grid.clone());
            expect(field.reaches(source)).toBe(path.length > 0);
            if (path.length > 0) expect(field.mod4(source)).toBe((path.length - 1) % 4);
            else cutOff++;
            compared++;
          }
        }
      }
      searches += fields.searches;
    }
    expect(compared).toBeGreaterThan(600);
    // Both outcomes occur: cells the closed cells cut off, and cells whose distance needed a search.
    expect(cutOff).toBeGreaterThan(20);
    expect(searches).toBeGreaterThan(10);
  });

  it('a goal on a blocked cell reaches nothing', () => {
    const layout = parseLayout(['.....', '..#..', '.....'].join('\n'));
    const field = new DistanceFields(layout).to(7, 0);
    for (const c of layout.floorCells) expect(field.reaches(c)).toBe(false);
  });
});

describe('DistanceFields cache', () => {
  it('evicts the least recently built fields beyond its byte budget, rebuilds them when asked again, and keeps the rest', () => {
    // An open 8 x 5 floor: every field covers it whole (the margin exceeds the floor), one
    // 32-bit word per row; the budget is the floor of 16 whole-floor fields.
    const layout = parseLayout(Array.from({ length: 5 }, () => '........').join('\n'));
    const fields = new DistanceFields(layout, 1);
    const first = new Map<number, DistanceField>();
    for (const goal of layout.floorCells) {
      const field = fields.to(goal, layout.floorCells[layout.floorCells.length - 1 - goal]);
      first.set(goal, field);
      expectAgrees(layout, field, distanceTable(layout, goal));
    }
    expect(fields.builds).toBe(40);
    expect(fields.size).toBe(16);
    // The 16 most recent are cached: asked again, the same objects, nothing built.
    for (const goal of layout.floorCells.slice(24)) expect(fields.to(goal, 0)).toBe(first.get(goal));
    expect(fields.builds).toBe(40);
    // An evicted one is built again (exact), and evicts the oldest cached one (goal 24).
    const again = fields.to(0, 39);
    expect(again).not.toBe(first.get(0));
    expectAgrees(layout, again, distanceTable(layout, 0));
    expect(fields.builds).toBe(41);
    expect(fields.to(25, 0)).toBe(first.get(25));
    expect(fields.to(24, 0)).not.toBe(first.get(24));
    expect(fields.builds).toBe(42);
    expect(fields.size).toBe(16);
  });
});

describe('GoalProgress', () => {
  it('reports progress exactly when the true distance to the goal reaches a new minimum, on random walks', () => {
    const random = seedrandom('goal-progress');
    let progressSeen = 0;
    let stepsSeen = 0;
    for (let g = 0; g < 60; g++) {
      const width = 6 + Math.floor(random() * 30);
      const height = 6 + Math.floor(random() * 20);
      const { layout } = randomLayout(random, width, height, 0.2);
      if (layout.floorCells.length < 2) continue;
      const fields = new DistanceFields(layout, undefined, 1);
      const progress = new GoalProgress(1, fields);
      // Robot 1 of three watched alongside: its numbers sit between other robots' numbers.
      const packed = new GoalProgress(3, fields);
      let cell = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
      for (let leg = 0; leg < 4; leg++) {
        const goal = layout.floorCells[Math.floor(random() * layout.floorCells.length)];
        // The engine resets the watch whenever a robot's phase (and so its goal) changes.
        progress.reset(0);
        packed.reset(1);
        const table = distanceTable(layout, goal);
        let best = Infinity;
        for (let t = 0; t < 120; t++) {
          // Mostly towards the goal, sometimes away or standing still, like a robot in traffic.
          const options = [cell];
          for (let d = 0; d < 4; d++) {
            const n = layout.neighbors[cell * 4 + d];
            if (n >= 0) options.push(n);
          }
          const closer = options.filter((n) => table[n] < table[cell]);
          cell = closer.length > 0 && random() < 0.6 ? closer[Math.floor(random() * closer.length)] : options[Math.floor(random() * options.length)];
          const expected = table[cell] < unreachable && table[cell] < best;
          if (table[cell] < unreachable) best = Math.min(best, table[cell]);
          if (progress.observe(0, goal, cell) !== expected) expect.fail(`floor ${g}, leg ${leg}, tick ${t}: expected progress ${expected}`);
          if (packed.observe(1, goal, cell) !== expected) expect.fail(`floor ${g}, leg ${leg}, tick ${t}: packed, expected progress ${expected}`);
          if (expected) progressSeen++;
          stepsSeen++;
        }
      }
    }
    expect(stepsSeen).toBeGreaterThan(20000);
    expect(progressSeen).toBeGreaterThan(2000);
  });

  it('after a reset the next observation counts as progress', () => {
    const layout = parseLayout(['.....', '.....'].join('\n'));
    const progress = new GoalProgress(1, new DistanceFields(layout));
    expect(progress.observe(0, 4, 0)).toBe(true);
    expect(progress.observe(0, 4, 0)).toBe(false);
    expect(progress.observe(0, 4, 5)).toBe(false); // one step farther
    progress.reset(0);
    expect(progress.observe(0, 4, 5)).toBe(true);
  });
});
