/**
 * Space-time reservation table for planned (decoupled) policies: which robot holds which
 * cell at which tick (Silver 2005, "Cooperative Pathfinding"), plus an "at rest from tick T
 * on, forever" reservation at the end of every robot's path, as token passing needs (Ma,
 * Li, Kumar, Koenig, AAMAS 2017).
 *
 * Storage is per cell: a list of reserved intervals [from, to] with their robot, sorted by
 * `from`, as safe-interval path planning reads them (Phillips & Likhachev, "SIPP: Safe
 * Interval Path Planning for Dynamic Environments", ICRA 2011): a path is written as one
 * interval per run of ticks on one cell (a robot waiting or handling for 20 ticks costs one
 * entry, not 20). The lists live in one pool of parallel typed arrays (from, to, robot,
 * next) with a free list; intervals that ended before the current tick are dropped whenever
 * their cell's list is written, so memory follows the live reservations (about 16 bytes per
 * run of a live path), not horizon x cells.
 *
 * `horizon` is the longest path, in ticks from its start, that a search may return; callers
 * raise it with `ensureHorizon` before planning long paths (it costs no memory).
 * The table also keeps each robot's live path, so a swap check can ask where a robot is at
 * t + 1. Reservations of different robots are expected not to overlap (every path is planned
 * against the others); queries stay correct if they do (a cell is taken while any other
 * robot's interval covers the tick).
 */

const none = -1;
/** A tick later than any simulated tick: the end of an interval that never ends. */
export const foreverTick = 0x3fffffff;

export class ReservationTable {
  horizon: number;
  /** Robot resting at the cell from `endFrom` on, or -1. */
  readonly endRobot: Int32Array;
  readonly endFrom: Int32Array;
  /** Live path per robot: cells at consecutive ticks from pathStart. */
  readonly paths: (Int32Array | null)[];
  readonly pathStart: Int32Array;
  /** First tick of each robot's live path that was written (earlier ticks were history). */
  private readonly writtenFrom: Int32Array;
  /** Bumped on every reserve and release, so callers can tell that nothing changed. */
  revision = 0;
  /** Bumped whenever a rest (endRobot / endFrom) begins or ends; paths alone leave it. */
  restRevision = 0;
  /** The latest current tick seen; path entries before it are history and never written. */
  private now = 0;

  // Interval pool: entry i covers ticks [from[i], to[i]] for robot[i]; next[i] links a cell's list.
  private head: Int32Array;
  /** Entries in each cell's list (an upper bound on its safe intervals minus one). */
  readonly listLength: Int32Array;
  private from = new Int32Array(1024);
  private to = new Int32Array(1024);
  private robot = new Int32Array(1024);
  private next = new Int32Array(1024);
  private freeHead = none;
  private used = 0;

  constructor(
    readonly cells: number,
    readonly robots: number,
    horizon = 256,
  ) {
    this.horizon = nextPowerOfTwo(horizon);
    this.head = new Int32Array(cells).fill(none);
    this.listLength = new Int32Array(cells);
    this.endRobot = new Int32Array(cells).fill(none);
    this.endFrom = new Int32Array(cells);
    this.paths = new Array(robots).fill(null);
    this.pathStart = new Int32Array(robots);
    this.writtenFrom = new Int32Array(robots);
  }

  /** True when `cell` at `tick` is held by no robot other than `self`. */
  isFree(cell: number, tick: number, self: number): boolean {
    for (let e = this.head[cell]; e !== none; e = this.next[e]) {
      if (this.from[e] > tick) break;
      if (this.to[e] >= tick && this.robot[e] !== self) return false;
    }
    const rester = this.endRobot[cell];
    return rester < 0 || rester === self || this.endFrom[cell] > tick;
  }

  /** The robot holding `cell` at `tick` by a path or a rest, or -1. */
  holder(cell: number, tick: number): number {
    for (let e = this.head[cell]; e !== none; e = this.next[e]) {
      if (this.from[e] > tick) break;
      if (this.to[e] >= tick) return this.robot[e];
    }
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
    for (let e = this.head[cell]; e !== none; e = this.next[e]) {
      if (this.to[e] >= tick && this.robot[e] !== self) return false;
    }
    return true;
  }

  /** True when `cell` is free for `self` at every tick in [from, to]. */
  isFreeDuring(cell: number, from: number, to: number, self: number): boolean {
    for (let e = this.head[cell]; e !== none; e = this.next[e]) {
      if (this.from[e] > to) break;
      if (this.to[e] >= from && this.robot[e] !== self) return false;
    }
    const rester = this.endRobot[cell];
    return rester < 0 || rester === self || this.endFrom[cell] > to;
  }

  /**
   * The safe intervals of `cell` for `self` from tick `from` on (SIPP): maximal runs of ticks
   * >= `from` at which no other robot holds the cell, in time order, written to lo/hi from
   * index `at`; the last one ends at `foreverTick` unless another robot rests there.
   * Returns the number written, at most listLength[cell] + 1.
   */
  safeIntervals(cell: number, from: number, self: number, lo: Int32Array, hi: Int32Array, at: number): number {
    const rester = this.endRobot[cell];
    const limit = rester >= 0 && rester !== self ? this.endFrom[cell] : foreverTick + 1;
    let cursor = from;
    let count = 0;
    for (let e = this.head[cell]; e !== none; e = this.next[e]) {
      const start = this.from[e];
      if (start >= limit) break;
      const end = this.to[e];
      if (end < cursor || this.robot[e] === self) continue;
      if (start > cursor) {
        lo[at + count] = cursor;
        hi[at + count] = start - 1;
        count++;
      }
      cursor = end + 1;
    }
    if (cursor < limit) {
      lo[at + count] = cursor;
      hi[at + count] = limit - 1;
      count++;
    }
    return count;
  }

  /**
   * Reserves `path` (cells at ticks start, start+1, ...) for `robot` and a rest at its last
   * cell; replaces its previous path. `now` (default `start`) is the current tick: entries
   * before it are in the past and are not written (a restored older path has start < now).
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
    const written = this.writtenFrom[robot];
    // From the start of the run that holds tick `from`, run by run.
    let i = Math.max(0, Math.min(path.length - 1, from - start));
    while (i > 0 && path[i - 1] === path[i]) i--;
    while (i < path.length) {
      const cell = path[i];
      let j = i;
      while (j + 1 < path.length && path[j + 1] === cell) j++;
      const end = start + j;
      if (end >= from && end >= written) this.cut(cell, robot, Math.max(start + i, written), end, from);
      i = j + 1;
    }
    const last = path[path.length - 1];
    if (this.endRobot[last] === robot) {
      this.endRobot[last] = none;
      this.restRevision++;
    }
    this.paths[robot] = null;
    this.revision++;
  }

  /** The cell where a robot's live path ends (where it rests), or -1. */
  restCell(robot: number): number {
    const path = this.paths[robot];
    return path ? path[path.length - 1] : -1;
  }

  /** Allows paths `length` ticks long from now (the horizon doubles until it fits; no memory is allocated). */
  ensureHorizon(length: number): void {
    if (length >= this.horizon) this.horizon = nextPowerOfTwo(length + 1);
  }

  /** Bytes held in typed arrays (for benchmarks). */
  memoryBytes(): number {
    const arrays = [this.head, this.listLength, this.endRobot, this.endFrom, this.pathStart, this.writtenFrom, this.from, this.to, this.robot, this.next];
    let bytes = 0;
    for (const a of arrays) bytes += a.byteLength;
    for (const p of this.paths) if (p) bytes += p.byteLength;
    return bytes;
  }

  private write(robot: number, path: Int32Array, start: number): void {
    const first = Math.max(0, this.now - start);
    this.writtenFrom[robot] = start + first;
    for (let i = first; i < path.length; ) {
      const cell = path[i];
      let j = i;
      while (j + 1 < path.length && path[j + 1] === cell) j++;
      this.insert(cell, start + i, start + j, robot);
      i = j + 1;
    }
    const end = start + path.length - 1;
    const last = path[path.length - 1];
    this.endRobot[last] = robot;
    this.endFrom[last] = end;
    this.restRevision++;
  }

  /** Inserts [from, to] for robot into the cell's list in `from` order, dropping entries that ended before now. */
  private insert(cell: number, from: number, to: number, robot: number): void {
    const entry = this.allocate();
    this.from[entry] = from;
    this.to[entry] = to;
    this.robot[entry] = robot;
    let previous = none;
    let e = this.head[cell];
    while (e !== none && this.from[e] <= from) {
      const following = this.next[e];
      if (this.to[e] < this.now) {
        this.unlink(cell, previous, e);
      } else {
        previous = e;
      }
      e = following;
    }
    this.next[entry] = e;
    if (previous === none) this.head[cell] = entry;
    else this.next[previous] = entry;
    this.listLength[cell]++;
  }

  /**
   * Removes the part at ticks >= `from` of the entry [entryFrom, entryTo] written for robot
   * in `cell` (matched exactly, so an older entry the robot left in the cell when a release
   * kept its past is not taken for it).
   */
  private cut(cell: number, robot: number, entryFrom: number, entryTo: number, from: number): void {
    let previous = none;
    for (let e = this.head[cell]; e !== none; e = this.next[e]) {
      if (this.from[e] > entryFrom) return;
      if (this.robot[e] === robot && this.to[e] === entryTo && this.from[e] === entryFrom) {
        if (this.from[e] < from) {
          if (this.to[e] >= from) this.to[e] = from - 1;
        } else {
          this.unlink(cell, previous, e);
        }
        return;
      }
      previous = e;
    }
  }

  private unlink(cell: number, previous: number, entry: number): void {
    if (previous === none) this.head[cell] = this.next[entry];
    else this.next[previous] = this.next[entry];
    this.next[entry] = this.freeHead;
    this.freeHead = entry;
    this.listLength[cell]--;
  }

  private allocate(): number {
    if (this.freeHead !== none) {
      const entry = this.freeHead;
      this.freeHead = this.next[entry];
      return entry;
    }
    if (this.used === this.from.length) {
      const capacity = 2 * this.used;
      const grow = (a: Int32Array) => {
        const b = new Int32Array(capacity);
        b.set(a);
        return b;
      };
      this.from = grow(this.from);
      this.to = grow(this.to);
      this.robot = grow(this.robot);
      this.next = grow(this.next);
    }
    return this.used++;
  }
}

function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}
