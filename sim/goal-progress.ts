/**
 * Progress of each robot towards its current goal, for the engine's stall watch: a robot
 * progresses when it stands closer to its goal than ever since it got that goal (or since
 * the last reset, e.g. a phase change or an operator relocation).
 *
 * The distance is followed step by step with the goal's compact field (sim/distance-field.ts):
 * robots move at most one cell per tick, and the field gives the exact change (+1 or -1) for
 * each step, so the distance relative to where the robot stood when it got the goal is exact
 * without a full distance table per live goal. That keeps the per-tick watch O(robots) with
 * no table lookups that can miss a bounded cache (with thousands of robots heading for
 * thousands of drops, one Int32 table per live goal does not fit, and a cache smaller than
 * the live goals rebuilds a table for almost every robot at every tick).
 */
import { reachedBit as reachedBitImport, type DistanceField, type DistanceFields } from './distance-field.ts';

// Read once: imported bindings are getters under the TypeScript loader, and this is read per
// moving robot per tick.
const reachedBit = reachedBitImport;

export class GoalProgress {
  private readonly goal: Int32Array;
  private readonly field: (DistanceField | null)[];
  private readonly cell: Int32Array;
  /** The field's byte at `cell` (distance mod 4 | reached bit). */
  private readonly value: Uint8Array;
  /** Distance relative to the cell where the goal was first seen. */
  private readonly relative: Int32Array;
  private readonly best: Int32Array;

  constructor(
    robots: number,
    private readonly fields: DistanceFields,
  ) {
    this.goal = new Int32Array(robots).fill(-1);
    this.field = new Array<DistanceField | null>(robots).fill(null);
    this.cell = new Int32Array(robots);
    this.value = new Uint8Array(robots);
    this.relative = new Int32Array(robots);
    this.best = new Int32Array(robots);
  }

  /** Forgets the robot's goal: its next observation counts as progress. */
  reset(robot: number): void {
    this.goal[robot] = -1;
  }

  /**
   * True when `cell` (column x, row y) is closer to `goal` than any cell the robot stood on
   * since it got the goal. A caller that has the column and row at hand passes them (the
   * deadlock detector: one lookup per moving robot per tick, not two).
   */
  observe(robot: number, goal: number, cell: number, x = cell % this.fields.layout.width, y = Math.floor(cell / this.fields.layout.width)): boolean {
    if (this.goal[robot] !== goal) {
      const field = this.fields.to(goal, cell);
      this.goal[robot] = goal;
      this.field[robot] = field;
      this.cell[robot] = cell;
      this.value[robot] = field.valueAtXY(x, y);
      this.relative[robot] = 0;
      this.best[robot] = 0;
      return (this.value[robot] & reachedBit) !== 0;
    }
    if (this.cell[robot] === cell) return false;
    this.cell[robot] = cell;
    let value = this.field[robot]!.valueAtXY(x, y);
    // The window keeps what it covered when it grows, so the previous cell stays covered.
    if (value < 0) {
      const field = this.fields.to(goal, cell);
      this.field[robot] = field;
      value = field.valueAtXY(x, y);
    }
    const before = this.value[robot];
    this.value[robot] = value;
    // A robot cut off from its goal has no distance: moving counts as nothing.
    if ((value & reachedBit) === 0 || (before & reachedBit) === 0) return false;
    // Neighbouring cells: the distance changed by exactly one (the grid is bipartite).
    const relative = this.relative[robot] + (((value - before) & 3) === 1 ? 1 : -1);
    this.relative[robot] = relative;
    if (relative < this.best[robot]) {
      this.best[robot] = relative;
      return true;
    }
    return false;
  }
}
