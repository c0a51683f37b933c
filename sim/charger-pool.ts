/**
 * The chargers (`C` cells) of a floor as a pool of single servers with one first-come,
 * first-served queue (a multi-server queue, Kleinrock, Queueing Systems vol. 1, ch. 3): a
 * charger serves one robot at a time; a robot that needs a charge takes the free charger
 * nearest to it (grid distance, ties in reading order) or joins the queue; when a robot
 * finishes charging, its charger goes to the robot at the head of the queue. A charger a
 * broken-down robot stands on is not free (the robot cannot leave it before its repair).
 *
 * The pool only keeps claims; the engine moves robots and runs the clock.
 */
export class ChargerPool {
  /** Robot holding each charger (by index in `chargers`), or -1. */
  private readonly holder: Int32Array;
  /** Charger index held by each robot, or -1. */
  private readonly heldBy: Int32Array;
  private readonly waiting: number[] = [];

  constructor(
    readonly chargers: Int32Array,
    robots: number,
  ) {
    this.holder = new Int32Array(chargers.length).fill(-1);
    this.heldBy = new Int32Array(robots).fill(-1);
  }

  /**
   * Robot r asks for a charger; `distanceTo(cell)` is its grid distance to a cell. Returns
   * the charger cell it may drive to, or -1 when it joins the queue.
   */
  request(robot: number, distanceTo: (cell: number) => number, blocked?: (cell: number) => boolean): number {
    if (this.heldBy[robot] >= 0) return this.chargers[this.heldBy[robot]];
    let best = -1;
    let bestDistance = Infinity;
    for (let i = 0; i < this.chargers.length; i++) {
      if (this.holder[i] >= 0 || blocked?.(this.chargers[i])) continue;
      const d = distanceTo(this.chargers[i]);
      if (d < bestDistance) {
        bestDistance = d;
        best = i;
      }
    }
    if (best < 0) {
      if (!this.waiting.includes(robot)) this.waiting.push(robot);
      return -1;
    }
    this.holder[best] = robot;
    this.heldBy[robot] = best;
    return this.chargers[best];
  }

  /**
   * Robot r is done with its charger. Returns the robot at the head of the queue, which now
   * holds that charger (its cell is `chargerOf(next)`), or -1 when nobody waits.
   */
  release(robot: number): number {
    const index = this.heldBy[robot];
    if (index < 0) return -1;
    this.heldBy[robot] = -1;
    this.holder[index] = -1;
    const next = this.waiting.shift();
    if (next === undefined) return -1;
    this.holder[index] = next;
    this.heldBy[next] = index;
    return next;
  }

  /**
   * The free charger on `cell` (one nobody holds) goes to the head of the queue: used when a
   * robot broken down on a free charger is repaired and leaves it. Returns that robot or -1.
   */
  offer(cell: number): number {
    const index = this.chargers.indexOf(cell);
    if (index < 0 || this.holder[index] >= 0) return -1;
    const next = this.waiting.shift();
    if (next === undefined) return -1;
    this.holder[index] = next;
    this.heldBy[next] = index;
    return next;
  }

  /** Charger cell held by robot r, or -1. */
  chargerOf(robot: number): number {
    const index = this.heldBy[robot];
    return index < 0 ? -1 : this.chargers[index];
  }

  /** Robots waiting for a charger. */
  get queueLength(): number {
    return this.waiting.length;
  }
}
