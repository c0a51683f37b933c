/**
 * Rest cells (sim/rest-cells.ts): extra non-task endpoints that keep a floor well-formed in
 * the sense of Ma, Li, Kumar, Koenig (AAMAS 2017, Definition 1). Every check of
 * well-formedness goes through checkWellFormed (sim/layout.ts), the implementation of that
 * definition, which the rest-cell code does not use.
 */
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import seedrandom from 'seedrandom';
import { loadScenarioFile } from '../scenarios/load.ts';
import { buildLayout, cellLabel, CellKind, checkWellFormed, parseLayout, type Layout } from '../sim/layout.ts';
import { chooseRestCells, restCellsForFleet, restCellsOf, restSpotsForFleet, withRestCells } from '../sim/rest-cells.ts';

const demoPath = fileURLToPath(new URL('../scenarios/demo-sortation.yaml', import.meta.url));
const labels = (layout: Layout, cells: ArrayLike<number>) => Array.from(cells, (c) => cellLabel(layout, c));

/** Well-formed for `robots` once the first cells of the choice are marked as parking. */
function wellFormedWith(layout: Layout, cells: Int32Array, robots: number) {
  return checkWellFormed(withRestCells(layout, cells), robots);
}

describe('chooseRestCells on hand-worked floors', () => {
  it('a one-lane corridor between a pickup and a drop holds no rest cell', () => {
    // (2,1) and (4,1) are the only accesses of P and D; (3,1) would cut the lane in two.
    const layout = parseLayout(`
#######
#P...D#
#######`);
    const choice = chooseRestCells(layout);
    expect(choice.reason).toBeNull();
    expect(choice.cells.length).toBe(0);
  });

  it('a two-lane aisle: only the two cells below the stations, worked by hand', () => {
    // F = (2,1) (3,1) (1,2) (2,2) (3,2) (4,2). Preference: (2,2), (3,2) first (beside no
    // station), but each would cut off a corner cell whose other neighbours are a station
    // and a wall: rejected. Then the cells beside stations, fewest floor neighbours first:
    // (1,2) (one, (2,2)) and (4,2) are accepted, P and D keep (2,1) and (3,1). Then (2,1)
    // would leave P with no plain floor neighbour, (3,1) likewise D: rejected.
    const layout = parseLayout(`
######
#P..D#
#....#
######`);
    const choice = chooseRestCells(layout);
    expect(labels(layout, choice.cells)).toEqual(['1:2', '4:2']);
    expect(wellFormedWith(layout, choice.cells, 2).wellFormed).toBe(true);
  });

  it("never takes a station's only access, nor a cell that joins two parts of the floor", () => {
    // P at (3,1) is reached only from (3,2); the hall is two rooms joined by the door (4,4).
    const layout = parseLayout(`
###########
###P#######
#...#.....#
#...#.....#
#H.......D#
#...#.....#
###########`);
    const choice = chooseRestCells(layout);
    const chosen = new Set(labels(layout, choice.cells));
    expect(chosen.has('3:2')).toBe(false);
    expect(chosen.has('4:4')).toBe(false);
    // Still well-formed with every rest cell as a parking spot.
    expect(wellFormedWith(layout, choice.cells, 1 + choice.cells.length).wellFormed).toBe(true);
    expect(choice.cells.length).toBeGreaterThan(5);
  });

  it('a floor that is not well-formed gets no rest cell and a reason', () => {
    // H(1,1) is reachable only through P(2,1): no aisle touches every endpoint.
    const layout = parseLayout(`
#######
#HP..D#
#######`);
    expect(checkWellFormed(layout, 1).wellFormed).toBe(false);
    const choice = chooseRestCells(layout);
    expect(choice.cells.length).toBe(0);
    expect(choice.reason).toMatch(/1:1/);
  });
});

describe('rest cells on the demo hall', () => {
  const demo = loadScenarioFile(demoPath);
  const layout = parseLayout(demo.layoutText);

  it('every fleet from 39 robots up to what the floor holds stays well-formed (checkWellFormed)', () => {
    const { cells } = restCellsOf(layout);
    const held = layout.parking.length + cells.length;
    // 38 parking spots; well above 100 robots must fit for the fleet-size curves.
    expect(layout.parking.length).toBe(38);
    expect(held).toBeGreaterThanOrEqual(200);
    expect(checkWellFormed(layout, 39).wellFormed).toBe(false);
    for (let robots = 39; robots <= held; robots += 7) {
      const extra = restCellsForFleet(layout, robots);
      expect(extra.length).toBe(robots - 38);
      expect(wellFormedWith(layout, extra, robots)).toEqual({ wellFormed: true, violation: null, pair: null });
    }
    expect(wellFormedWith(layout, cells, held).wellFormed).toBe(true);
    // One robot more than it holds: not enough non-task endpoints.
    expect(wellFormedWith(layout, cells, held + 1).wellFormed).toBe(false);
  });

  it('up to 100 robots, no rest cell stands beside a pickup or a drop', () => {
    const extra = restCellsForFleet(layout, 100);
    for (const c of extra) {
      for (let d = 0; d < 4; d++) {
        const n = layout.neighbors[c * 4 + d];
        if (n < 0) continue;
        expect([CellKind.Pickup, CellKind.Drop]).not.toContain(layout.kind[n]);
      }
    }
  });

  it('a fleet within the parking count uses no rest cell; rest spots list marked parking first', () => {
    expect(restCellsForFleet(layout, 38).length).toBe(0);
    expect(Array.from(restSpotsForFleet(layout, 24))).toEqual(Array.from(layout.parking));
    const spots = restSpotsForFleet(layout, 50);
    expect(Array.from(spots.subarray(0, 38))).toEqual(Array.from(layout.parking));
    expect(spots.length).toBe(50);
    for (const c of spots.subarray(38)) expect(layout.kind[c]).toBe(CellKind.Floor);
  });
});

const legendOf: Record<number, string> = {
  [CellKind.Blocked]: '#',
  [CellKind.Floor]: '.',
  [CellKind.Pickup]: 'P',
  [CellKind.Drop]: 'D',
  [CellKind.Storage]: 'S',
  [CellKind.Parking]: 'H',
};

/** A random small floor: walls round the edge, some blocked cells, endpoints scattered. */
function randomLayout(seed: number): Layout {
  const random = seedrandom(`rest-${seed}`);
  const width = 5 + Math.floor(random() * 12);
  const height = 4 + Math.floor(random() * 9);
  const blocked = 0.05 + 0.3 * random();
  const kind = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const border = x === 0 || y === 0 || x === width - 1 || y === height - 1;
      const r = random();
      kind[y * width + x] =
        border || r < blocked ? CellKind.Blocked : r < blocked + 0.05 ? CellKind.Pickup : r < blocked + 0.1 ? CellKind.Drop : r < blocked + 0.13 ? CellKind.Storage : r < blocked + 0.18 ? CellKind.Parking : CellKind.Floor;
    }
  }
  return buildLayout(width, height, kind);
}

describe('rest cells on random floors (property test, fast-check)', () => {
  it('every prefix of the choice keeps a well-formed floor well-formed; a floor that is not gets none', () => {
    let withCells = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 1_000_000 }), fc.double({ min: 0, max: 1, noNaN: true }), (seed, fraction) => {
        const layout = randomLayout(seed);
        const parking = layout.parking.length;
        const choice = chooseRestCells(layout);
        const pairsJoined = checkWellFormed(layout, 0).wellFormed;
        if (!pairsJoined) {
          // Rest cells cannot repair a floor whose endpoints are already cut off from each other.
          expect(choice.cells.length).toBe(0);
          expect(choice.reason).not.toBeNull();
          return;
        }
        if (choice.cells.length > 0) withCells++;
        const k = Math.round(fraction * choice.cells.length);
        const prefix = choice.cells.subarray(0, k);
        const result = wellFormedWith(layout, prefix, parking + k);
        if (!result.wellFormed) throw new Error(`not well-formed with ${k} rest cells: ${result.violation}\n${render(layout, prefix)}`);
        // Rest cells are plain floor cells, each chosen once.
        expect(new Set(prefix).size).toBe(k);
        for (const c of prefix) expect(layout.kind[c]).toBe(CellKind.Floor);
      }),
      { numRuns: Number(process.env.PROPERTY_RUNS ?? 300), seed: Number(process.env.PROPERTY_SEED ?? 20261201) },
    );
    expect(withCells).toBeGreaterThan(50);
  });
});

function render(layout: Layout, cells: ArrayLike<number>): string {
  const marked = new Set(Array.from(cells));
  const rows: string[] = [];
  for (let y = 0; y < layout.height; y++) {
    let row = '';
    for (let x = 0; x < layout.width; x++) row += marked.has(y * layout.width + x) ? 'r' : legendOf[layout.kind[y * layout.width + x]];
    rows.push(row);
  }
  return rows.join('\n');
}
