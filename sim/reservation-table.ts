/**
 * Space-time reservation table for planned (decoupled) policies: which robot holds which
 * cell at which tick (Silver 2005, "Cooperative Pathfinding"), plus an "at rest from tick T
 * on, forever" reservation at the end of every robot's path, as token passing needs (Ma,
 * Li, Kumar, Koenig, AAMAS 2017).
 *
 * Storage is a ring of `horizon` layers of `cells` slots, each slot holding the robot and the
 * tick it was written for; a slot whose tick stamp differs from the asked tick is free, so
 * passing time never needs clearing. Every live path must end less than `horizon` ticks
 * after the current tick; `ensureHorizon` doubles the ring and re-inserts the live paths.
 * The table also keeps each robot's live path, so a swap check can ask where a robot is at
 * t + 1. Memory: 8 * horizon * cells bytes.
 */

export class ReservationTable {
  horizon: number;
  private mask: number;
  private who: Int32Array;
  private when: Int32Array;
  /** Robot resting at the cell from `endFrom` on, or -1. */
  readonly endRobot: Int32Array;
  readonly endFrom: Int32Array;
  /** Live path per robot: cells at consecutive ticks from pathStart. */
  readonly paths: (Int32Array | null)[];
  readonly pathStart: Int32Array;
  /**
   * Per cell, the largest tick any path has reserved it for. Never lowered on release, so
   * it over-estimates; it only bounds the free-forever scan (a performance shortcut).
   */
  readonly lastTickOfCell: Int32Array;
  /** Bumped on every reserve and release, so callers can tell that nothing changed. */
  revision = 0;
  /** The latest current tick seen; path entries before it are history and never written. */
  private now = 0;

  constructor(
    readonly cells: number,
    readonly robots: number,
    horizon = 256,
  ) {
    this.horizon = nextPowerOfTwo(horizon);
    this.mask = this.horizon - 1;
    this.who = new Int32Array(this.horizon * cells);
    this.when = new Int32Array(this.horizon * cells).fill(-1);
    this.endRobot = new Int32Array(cells).fill(-1);
    this.endFrom = new Int32Array(cells);
    this.lastTickOfCell = new Int32Array(cells).fill(-1);
    this.paths = new Array(robots).fill(null);
    this.pathStart = new Int32Array(robots);
  }

  /** True when `cell` at `tick` is held by no robot other than `self`. */
  isFree(cell: number, tick: number, self: number): boolean {
    const slot = (tick & this.mask) * this.cells + cell;
    if (this.when[slot] === tick && this.who[slot] !== self) return false;
    const rester = this.endRobot[cell];
    return rester < 0 || rester === self || this.endFrom[cell] > tick;
  }

  /** The robot holding `cell` at `tick` by a path or a rest, or -1. */
  holder(cell: number, tick: number): number {
    const slot = (tick & this.mask) * this.cells + cell;
    if (this.when[slot] === tick) return this.who[slot];
    const rester = this.endRobot[cell];
    return rester >= 0 && this.endFrom[cell] <= tick ? rester : -1;
  }

  /** Where robot r is at `tick` by its live path (its rest cell after the path), or -1. */
  positionAt(robot: number, tick: number): number {
    const path = this.paths[robot];
    if (!path) return -1;
    const offset = tick - this.pathStart[robot];
    if (offset < 0) return -1;
    return offset < path.length ? path[offset] : path[path.length - 1];
  }

  /** True when moving from -> to between tick and tick+1 swaps cells with another robot. */
  swaps(from: number, to: number, tick: number, self: number): boolean {
    if (from === to) return false;
    const other = this.holder(to, tick);
    if (other < 0 || other === self) return false;
    return this.positionAt(other, tick + 1) === from;
  }

  /** True when `cell` is free for `self` at every tick >= `tick`. */
  isFreeFrom(cell: number, tick: number, self: number): boolean {
    const rester = this.endRobot[cell];
    if (rester >= 0 && rester !== self) return false;
    const last = this.lastTickOfCell[cell];
    for (let t = tick; t <= last; t++) {
      const slot = (t & this.mask) * this.cells + cell;
      if (this.when[slot] === t && this.who[slot] !== self) return false;
    }
    return true;
  }

  /** True when `cell` is free for `self` at every tick in [from, to]. */
  isFreeDuring(cell: number, from: number, to: number, self: number): boolean {
    for (let t = from; t <= to; t++) if (!this.isFree(cell, t, self)) return false;
    return true;
  }

  /**
   * Reserves `path` (cells at ticks start, start+1, ...) for `robot` and a rest at its last
   * cell; replaces its previous path. `now` (default `start`) is the current tick: entries
   * before it are in the past and are not written, because their ring slots may already
   * hold live reservations for `horizon` ticks later (a restored older path has start < now).
   */
  reserve(robot: number, path: Int32Array, start: number, now = start): void {
    if (now > this.now) this.now = now;
    this.release(robot, now);
    this.ensureHorizon(path.length + 1);
    this.write(robot, path, start);
    this.revision++;
    this.paths[robot] = path;
    this.pathStart[robot] = start;
  }

  /** A robot standing still at `cell` from `tick` on (its initial placement). */
  rest(robot: number, cell: number, tick: number): void {
    this.reserve(robot, Int32Array.of(cell), tick);
  }

  /** Drops robot r's path entries at ticks >= `from` and its rest. */
  release(robot: number, from: number): void {
    const path = this.paths[robot];
    if (!path) return;
    const start = this.pathStart[robot];
    for (let i = Math.max(0, from - start); i < path.length; i++) {
      const t = start + i;
      const slot = (t & this.mask) * this.cells + path[i];
      if (this.when[slot] === t && this.who[slot] === robot) this.when[slot] = -1;
    }
    const last = path[path.length - 1];
    if (this.endRobot[last] === robot) this.endRobot[last] = -1;
    this.paths[robot] = null;
    this.revision++;
  }

  /** The cell where a robot's live path ends (where it rests), or -1. */
  restCell(robot: number): number {
    const path = this.paths[robot];
    return path ? path[path.length - 1] : -1;
  }

  /** Makes room for paths `length` ticks long from now; re-inserts live paths if the ring grows. */
  ensureHorizon(length: number): void {
    if (length < this.horizon) return;
    const horizon = nextPowerOfTwo(length + 1);
    this.horizon = horizon;
    this.mask = horizon - 1;
    this.who = new Int32Array(horizon * this.cells);
    this.when = new Int32Array(horizon * this.cells).fill(-1);
    for (let r = 0; r < this.robots; r++) {
      const path = this.paths[r];
      if (path) this.write(r, path, this.pathStart[r]);
    }
  }

  private write(robot: number, path: Int32Array, start: number): void {
    const lastTickOfCell = this.lastTickOfCell;
    for (let i = Math.max(0, this.now - start); i < path.length; i++) {
      const t = start + i;
      const cell = path[i];
      const slot = (t & this.mask) * this.cells + cell;
      this.who[slot] = robot;
      this.when[slot] = t;
      if (t > lastTickOfCell[cell]) lastTickOfCell[cell] = t;
    }
    const end = start + path.length - 1;
    const last = path[path.length - 1];
    this.endRobot[last] = robot;
    this.endFrom[last] = end;
  }
}

function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}
