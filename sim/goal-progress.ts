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

/** Slots of a robot's numbers (a const enum: the numbers are written into the code). */
const enum G {
  Goal = 0,
  /** The cell last observed. */
  Cell = 1,
  /** The field's value at that cell (distance mod 4 | reached bit). */
  Value = 2,
  /** Distance relative to the cell where the goal was first seen. */
  Relative = 3,
  Best = 4,
  /** Numbers kept per robot, side by side (one block per robot: what a moving robot's step reads is on one line). */
  Count = 5,
}

export class GoalProgress {
  private readonly field: (DistanceField | null)[];
  /** Per robot, `G.Count` numbers at `robot * G.Count` (G, above). */
  private readonly state: Int32Array;

  constructor(
    robots: number,
    private readonly fields: DistanceFields,
  ) {
    this.field = new Array<DistanceField | null>(robots).fill(null);
    this.state = new Int32Array(robots * G.Count);
    for (let r = 0; r < robots; r++) this.state[r * G.Count + G.Goal] = -1;
  }

  /** Forgets the robot's goal: its next observation counts as progress. */
  reset(robot: number): void {
    this.state[robot * G.Count + G.Goal] = -1;
  }

  /**
   * True when `cell` (column x, row y) is closer to `goal` than any cell the robot stood on
   * since it got the goal. A caller that has the column and row at hand passes them (the
   * deadlock detector: one lookup per moving robot per tick, not two).
   */
  observe(robot: number, goal: number, cell: number, x = cell % this.fields.layout.width, y = Math.floor(cell / this.fields.layout.width)): boolean {
    const state = this.state;
    const base = robot * G.Count;
    if (state[base + G.Goal] !== goal) {
      const field = this.fields.to(goal, cell);
      const value = field.valueAtXY(x, y);
      state[base + G.Goal] = goal;
      this.field[robot] = field;
      state[base + G.Cell] = cell;
      state[base + G.Value] = value;
      state[base + G.Relative] = 0;
      state[base + G.Best] = 0;
      return (value & reachedBit) !== 0;
    }
    if (state[base + G.Cell] === cell) return false;
    state[base + G.Cell] = cell;
    let value = this.field[robot]!.valueAtXY(x, y);
    // The window keeps what it covered when it grows, so the previous cell stays covered.
    if (value < 0) {
      const field = this.fields.to(goal, cell);
      this.field[robot] = field;
      value = field.valueAtXY(x, y);
    }
    const before = state[base + G.Value];
    state[base + G.Value] = value;
    // A robot cut off from its goal has no distance: moving counts as nothing.
    if ((value & reachedBit) === 0 || (before & reachedBit) === 0) return false;
    // Neighbouring cells: the distance changed by exactly one (the grid is bipartite).
    const relative = state[base + G.Relative] + (((value - before) & 3) === 1 ? 1 : -1);
    state[base + G.Relative] = relative;
    if (relative < state[base + G.Best]) {
      state[base + G.Best] = relative;
      return true;
    }
    return false;
  }
}
