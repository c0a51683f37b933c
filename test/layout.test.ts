import { describe, expect, it } from 'vitest';
import { checkWellFormed, parseLayout, LayoutError, cellLabel } from '../sim/layout.ts';

describe('parseLayout', () => {
  it('indexes cells y * width + x and lists endpoints in reading order', () => {
    const layout = parseLayout(`
#####
#P.D#
#H.S#
#####`);
    expect([layout.width, layout.height]).toEqual([5, 4]);
    expect(Array.from(layout.pickups)).toEqual([1 * 5 + 1]);
    expect(Array.from(layout.drops)).toEqual([1 * 5 + 3]);
    expect(Array.from(layout.parking)).toEqual([2 * 5 + 1]);
    expect(Array.from(layout.storage)).toEqual([2 * 5 + 3]);
    expect(layout.floorCells.length).toBe(6);
    expect(cellLabel(layout, 2 * 5 + 3)).toBe('3:2');
  });

  it('gives each cell its open directions as one byte: bit d set exactly where the neighbour table has a cell, that cell at the direction offset', () => {
    const layout = parseLayout(`
######
#P.#D#
#.#..#
#H...#
######`);
    const offsets = [-layout.width, 1, layout.width, -1];
    let open = 0;
    for (let c = 0; c < layout.cellCount; c++) {
      for (let d = 0; d < 4; d++) {
        const n = layout.neighbors[c * 4 + d];
        expect((layout.openDirections[c] >> d) & 1).toBe(n >= 0 ? 1 : 0);
        if (n >= 0) {
          expect(n).toBe(c + offsets[d]);
          open++;
        }
      }
      expect(layout.openDirections[c] >> 4).toBe(0);
    }
    // Counted by hand: 10 floor cells with 10 floor-to-floor contacts (5 across, 5 up and down), each seen from both sides.
    expect(layout.floorCells.length).toBe(10);
    expect(open).toBe(20);
  });

  it('rejects ragged rows and unknown characters, naming row and column', () => {
    expect(() => parseLayout('###\n#P\n###')).toThrow(/row 2 has 2 cells, expected 3/);
    expect(() => parseLayout('###\n#X#\n###')).toThrow(LayoutError);
    expect(() => parseLayout('###\n#X#\n###')).toThrow(/row 2 column 2 has "X"/);
  });
});

describe('well-formedness (Ma, Li, Kumar, Koenig, AAMAS 2017, Definition 1)', () => {
  it('accepts endpoints that all touch one aisle', () => {
    const layout = parseLayout(`
#######
#P.D.H#
#.....#
#H.D.P#
#######`);
    expect(checkWellFormed(layout, 2)).toEqual({ wellFormed: true, violation: null, pair: null });
  });

  it('reports the two endpoints when one is reachable only through another', () => {
    // H(1,1) sits in a dead end behind P(2,1): every path from H to D crosses P.
    const layout = parseLayout(`
######
#HP.D#
######`);
    const result = checkWellFormed(layout, 1);
    expect(result.wellFormed).toBe(false);
    expect(result.violation).toMatch(/parking 1:1 and drop 4:1/);
    expect(result.pair).toEqual([1 * 6 + 1, 1 * 6 + 4]);
  });

  it('needs at least one parking spot (non-task endpoint) per robot', () => {
    const layout = parseLayout(`
######
#P..D#
#H...#
######`);
    expect(checkWellFormed(layout, 1).wellFormed).toBe(true);
    const result = checkWellFormed(layout, 2);
    expect(result.wellFormed).toBe(false);
    expect(result.violation).toMatch(/1 parking spots \(H\) for 2 robots/);
  });
});
