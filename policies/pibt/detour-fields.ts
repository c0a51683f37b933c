/**
 * Detour fields for PIBT: distance fields on the floor with the cells of long-fixed robots
 * closed (broken down, or charging on a charger), for robots whose gradient runs into one.
 *
 * Why. PIBT ranks a robot's moves by its distance to its goal (Okumura et al., "Priority
 * inheritance with backtracking for iterative multi-agent path finding", AIJ 2022), a static
 * distance that knows walls, not robots. Robots move on, so that is right for them; a robot
 * broken down for 20 minutes is a wall the static distance does not know. A robot whose only
 * closer neighbour is such a cell (a straight run along an aisle) ranks staying above every
 * other move and waits there, and with it every robot behind it: on the demo shift hall
 * (breakdowns MTBF 8 h, MTTR 20 min) up to 22 of 24 robots stood in two lines either side
 * of one broken robot until its repair. The fix is the static distance with those cells
 * treated as obstacles: replanning around known static obstacles is what a lifelong planner
 * does when the map changes (Koenig & Likhachev, "D* Lite", AAAI 2002, repair a distance
 * field when cells become blocked; here the field is simply searched again, since the windows
 * are small and changes rare).
 *
 * When. Lazily: a robot switches to its goal's detour field only when one of its neighbours
 * that the static field calls closer is closed, and keeps it (sticky, so it does not turn back
 * into the static gradient half way round) until its goal changes or no cell is closed. The
 * set of closed cells is read from the world before every step; any change (a breakdown, a
 * repair, a charge begun or done) bumps `version` and drops the cached fields, and robots on a
 * detour fetch their goal's field again under the new version. A goal's own cell is never
 * closed for its searches (sim/distance-field.ts), so a robot heading for a goal that a fixed
 * robot holds still heads for it.
 *
 * Cost: nothing while no robot is fixed for long (the policy reads one count per push), so
 * runs without breakdowns or charging are unchanged; otherwise one windowed search per goal
 * and version for the goals whose robots meet a closed cell.
 */
import type { Layout } from '../../sim/layout.ts';
import { DistanceFields, type DistanceField } from '../../sim/distance-field.ts';

export class DetourFields {
  /** Per cell: 1 while a long-fixed robot stands there. */
  readonly closed: Uint8Array;
  /** Closed cells now, in robot order. */
  private cells: Int32Array;
  count = 0;
  /** Bumped whenever the closed set changes. */
  version = 0;
  /** Times the closed set changed, and robots that switched to a detour field. */
  changes = 0;
  switches = 0;
  private readonly passable: Uint8Array;
  private readonly fields: DistanceFields;
  private scratch: Int32Array;
  private scratchCount = 0;

  constructor(
    private readonly layout: Layout,
    robots: number,
    budgetBytes = 64 * 1024 * 1024,
  ) {
    this.closed = new Uint8Array(layout.cellCount);
    this.passable = Uint8Array.from(layout.passable);
    this.fields = new DistanceFields(layout, budgetBytes, undefined, this.passable);
    this.cells = new Int32Array(robots);
    this.scratch = new Int32Array(robots);
  }

  /** Fields searched for detours, and cells searched for them. */
  get builds(): number {
    return this.fields.builds;
  }

  get cellsSearched(): number {
    return this.fields.cellsSearched;
  }

  /** Starts collecting this step's closed cells (call `add` per long-fixed robot, then `commit`). */
  begin(): void {
    this.scratchCount = 0;
  }

  add(cell: number): void {
    this.scratch[this.scratchCount++] = cell;
  }

  /** Makes the collected cells the closed set; true when it changed. */
  commit(): boolean {
    const n = this.scratchCount;
    if (n === this.count) {
      let same = true;
      for (let i = 0; i < n && same; i++) same = this.scratch[i] === this.cells[i];
      if (same) return false;
    }
    for (let i = 0; i < this.count; i++) {
      const c = this.cells[i];
      this.closed[c] = 0;
      this.passable[c] = this.layout.passable[c];
    }
    for (let i = 0; i < n; i++) {
      const c = this.scratch[i];
      this.closed[c] = 1;
      this.passable[c] = 0;
    }
    const swap = this.cells;
    this.cells = this.scratch;
    this.scratch = swap;
    this.count = n;
    this.version++;
    this.changes++;
    this.fields.clear();
    return true;
  }

  /** The detour field of `goal` covering `near` and its neighbours, under the current closed set. */
  to(goal: number, near: number): DistanceField {
    return this.fields.to(goal, near);
  }
}
