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
 * entry, not 20). Each cell's list is one contiguous block of a shared pool of parallel
 * typed arrays (from, to, robot), found by a per-cell start index and capacity, so the
 * searches' reads (safe intervals, holder, swap tests) walk consecutive slots instead of
 * chasing links; a block that fills moves to the end of the pool at twice its capacity,
 * and the pool is repacked when it runs out. Intervals that ended before the current tick
 * are dropped whenever their cell's list is written or its safe intervals are read, so
 * searches do not step over history and memory follows the live
 * reservations (about 12 bytes per run of a live path, plus block slack), not horizon x
 * cells.
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
  /** The last cell of each robot's live path (where it rests), or -1: `restCell` without reading the path. */
  readonly pathEnd: Int32Array;
  /** First tick of each robot's live path that was written (earlier ticks were history). */
  private readonly writtenFrom: Int32Array;
  /** Bumped on every reserve and release, so callers can tell that nothing changed. */
  revision = 0;
  /** Bumped whenever a rest (endRobot / endFrom) begins or ends; paths alone leave it. */
  restRevision = 0;
  /** The latest current tick seen; path entries before it are history and never written. */
  private now = 0;

  /** The latest current tick seen: every live path's ticks from here on are written as entries. */
  get writtenSince(): number {
    return this.now;
  }

  // Interval pool: entry i covers ticks [from[i], to[i]] for robot[i]; a cell's list is
  // entries cellStart[c] .. cellStart[c] + listLength[c] - 1, in `from` order (ties in
  // insertion order), in a block of cellCapacity[c] slots.
  private readonly cellStart: Int32Array;
  private readonly cellCapacity: Int32Array;
  /** Entries in each cell's list (an upper bound on its safe intervals minus one). */
  readonly listLength: Int32Array;
  private from = new Int32Array(1024);
  private to = new Int32Array(1024);
  private robot = new Int32Array(1024);
  /** Slots of the pool handed out to blocks (live or left behind by a move). */
  private used = 0;

  constructor(
    readonly cells: number,
    readonly robots: number,
    horizon = 256,
  ) {
    this.horizon = nextPowerOfTwo(horizon);
    this.cellStart = new Int32Array(cells);
    this.cellCapacity = new Int32Array(cells);
    this.listLength = new Int32Array(cells);
    this.endRobot = new Int32Array(cells).fill(none);
    this.endFrom = new Int32Array(cells);
    this.paths = new Array(robots).fill(null);
    this.pathStart = new Int32Array(robots);
    this.pathEnd = new Int32Array(robots).fill(none);
    this.writtenFrom = new Int32Array(robots);
  }

  /** True when `cell` at `tick` is held by no robot other than `self`. */
  isFree(cell: number, tick: number, self: number): boolean {
    for (let e = this.cellStart[cell], end = e + this.listLength[cell]; e < end; e++) {
      if (this.from[e] > tick) break;
      if (this.to[e] >= tick && this.robot[e] !== self) return false;
    }
    const rester = this.endRobot[cell];
    return rester < 0 || rester === self || this.endFrom[cell] > tick;
  }

  /** The robot holding `cell` at `tick` by a path or a rest, or -1. */
  holder(cell: number, tick: number): number {
    for (let e = this.cellStart[cell], end = e + this.listLength[cell]; e < end; e++) {
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

  /**
   * True when `self` may step from `from` onto `to` between `tick` and `tick + 1`: `to` is
   * free at tick + 1 (unless `toFree`: the caller knows it is) and the step swaps with no
   * robot. The same answer as `(toFree || isFree(to, tick + 1, self)) && !swaps(from, to,
   * tick, self)`, read in one pass over `to`'s list (the walk over the shortest states asks
   * it for every step it tries).
   */
  mayStep(from: number, to: number, tick: number, self: number, toFree: boolean): boolean {
    const next = tick + 1;
    let other = -1;
    for (let e = this.cellStart[to], end = e + this.listLength[to]; e < end; e++) {
      const start = this.from[e];
      if (start > next) break;
      const stop = this.to[e];
      if (!toFree && stop >= next && this.robot[e] !== self) return false;
      // The holder at `tick`: the first entry that covers it, as `holder` reads it.
      if (other < 0 && start <= tick && stop >= tick) other = this.robot[e];
    }
    const rester = this.endRobot[to];
    if (!toFree && rester >= 0 && rester !== self && this.endFrom[to] <= next) return false;
    if (other < 0) other = rester >= 0 && this.endFrom[to] <= tick ? rester : -1;
    if (other < 0 || other === self || from === to) return true;
    return this.positionAt(other, next) !== from;
  }

  /** True when `cell` is free for `self` at every tick >= `tick`. */
  isFreeFrom(cell: number, tick: number, self: number): boolean {
    const rester = this.endRobot[cell];
    if (rester >= 0 && rester !== self) return false;
    for (let e = this.cellStart[cell], end = e + this.listLength[cell]; e < end; e++) {
      if (this.to[e] >= tick && this.robot[e] !== self) return false;
    }
    return true;
  }

  /** True when `cell` is free for `self` at every tick in [from, to]. */
  isFreeDuring(cell: number, from: number, to: number, self: number): boolean {
    for (let e = this.cellStart[cell], end = e + this.listLength[cell]; e < end; e++) {
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
    // The last free tick (kept below 2^30 so that it stays a small integer for the JIT).
    const last = rester >= 0 && rester !== self ? this.endFrom[cell] - 1 : foreverTick;
    const first = this.cellStart[cell];
    // Entries that ended before now are read by no query; a cell nobody wrote to for a while
    // keeps them until its next write, so drop them here, where the searches read them most.
    if (this.listLength[cell] > 0 && this.to[first] < this.now) this.dropEnded(cell);
    let cursor = from;
    let count = 0;
    for (let e = first, end = e + this.listLength[cell]; e < end; e++) {
      const start = this.from[e];
      if (start > last) break;
      const end = this.to[e];
      if (end < cursor || this.robot[e] === self) continue;
      if (start > cursor) {
        lo[at + count] = cursor;
        hi[at + count] = start - 1;
        count++;
      }
      cursor = end + 1;
    }
    if (cursor <= last) {
      lo[at + count] = cursor;
      hi[at + count] = last;
      count++;
    }
    return count;
  }

  /**
   * The earliest tick >= k at which `self` can arrive on `cell` and stay there for `hold`
   * more ticks, with the cell's safe intervals read from tick `from` on (as `safeIntervals`
   * gives them, so never before `from`) and robot `ignored`'s entries and rest left out as
   * well as `self`'s; `foreverTick` when there is none. It is the goal-ready tick of the
   * search (sim/space-time-astar.ts, `ready` over the arrival windows) as if `ignored` had
   * been released, without releasing it: a lower bound on when a robot k ticks away can
   * start its handling there (token passing's swap probe, policies/token-passing).
   */
  earliestStay(cell: number, from: number, k: number, hold: number, self: number, ignored: number): number {
    const rester = this.endRobot[cell];
    const last = rester >= 0 && rester !== self && rester !== ignored ? this.endFrom[cell] - 1 : foreverTick;
    let cursor = from;
    for (let e = this.cellStart[cell], end = e + this.listLength[cell]; e < end; e++) {
      const start = this.from[e];
      if (start > last) break;
      const stop = this.to[e];
      const robot = this.robot[e];
      if (stop < cursor || robot === self || robot === ignored) continue;
      // The free run [cursor, start - 1] holds an arrival a with a + hold <= start - 1.
      if (start > cursor && start - 1 - hold >= cursor && start - 1 - hold >= k) return cursor > k ? cursor : k;
      cursor = stop + 1;
    }
    if (cursor > last) return foreverTick;
    if (last === foreverTick) return cursor > k ? cursor : k;
    return last - hold >= cursor && last - hold >= k ? (cursor > k ? cursor : k) : foreverTick;
  }

  /** Removes the entries of `cell` that ended before now (keeping the others in order). */
  private dropEnded(cell: number): void {
    const first = this.cellStart[cell];
    const end = first + this.listLength[cell];
    const froms = this.from;
    const tos = this.to;
    const robots = this.robot;
    const now = this.now;
    let write = first;
    for (let e = first; e < end; e++) {
      if (tos[e] < now) continue;
      if (write !== e) {
        froms[write] = froms[e];
        tos[write] = tos[e];
        robots[write] = robots[e];
      }
      write++;
    }
    this.listLength[cell] = write - first;
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
    this.pathEnd[robot] = path[path.length - 1];
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
    this.pathEnd[robot] = none;
    this.revision++;
  }

  /** The cell where a robot's live path ends (where it rests), or -1. */
  restCell(robot: number): number {
    return this.pathEnd[robot];
  }

  /** Allows paths `length` ticks long from now (the horizon doubles until it fits; no memory is allocated). */
  ensureHorizon(length: number): void {
    if (length >= this.horizon) this.horizon = nextPowerOfTwo(length + 1);
  }

  /** Bytes held in typed arrays (for benchmarks). */
  memoryBytes(): number {
    const arrays = [this.cellStart, this.cellCapacity, this.listLength, this.endRobot, this.endFrom, this.pathStart, this.pathEnd, this.writtenFrom, this.from, this.to, this.robot];
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
    if (this.listLength[cell] > 0 && this.to[this.cellStart[cell]] < this.now) this.dropEnded(cell);
    const length = this.listLength[cell];
    // Most entries are the latest on their cell (paths are planned forwards in time): append
    // without walking the list.
    if (length === 0 || this.from[this.cellStart[cell] + length - 1] <= from) {
      if (length === this.cellCapacity[cell]) this.move(cell);
      const at = this.cellStart[cell] + length;
      this.from[at] = from;
      this.to[at] = to;
      this.robot[at] = robot;
      this.listLength[cell] = length + 1;
      return;
    }
    if (length === this.cellCapacity[cell]) this.move(cell);
    const first = this.cellStart[cell];
    const end = first + this.listLength[cell];
    const froms = this.from;
    const tos = this.to;
    const robots = this.robot;
    const now = this.now;
    // Keep the entries up to the insertion point (after every entry starting no later) that
    // have not ended, closing the gaps; stale entries all start before `from` (from >= now).
    let write = first;
    let e = first;
    for (; e < end && froms[e] <= from; e++) {
      if (tos[e] < now) continue;
      if (write !== e) {
        froms[write] = froms[e];
        tos[write] = tos[e];
        robots[write] = robots[e];
      }
      write++;
    }
    // The entries after the insertion point move to just behind the new one.
    const shift = write + 1 - e;
    if (shift > 0) {
      for (let k = end - 1; k >= e; k--) {
        froms[k + shift] = froms[k];
        tos[k + shift] = tos[k];
        robots[k + shift] = robots[k];
      }
    } else if (shift < 0) {
      for (let k = e; k < end; k++) {
        froms[k + shift] = froms[k];
        tos[k + shift] = tos[k];
        robots[k + shift] = robots[k];
      }
    }
    froms[write] = from;
    tos[write] = to;
    robots[write] = robot;
    this.listLength[cell] = end + shift - first;
  }

  /**
   * Removes the part at ticks >= `from` of the entry [entryFrom, entryTo] written for robot
   * in `cell` (matched exactly, so an older entry the robot left in the cell when a release
   * kept its past is not taken for it).
   */
  private cut(cell: number, robot: number, entryFrom: number, entryTo: number, from: number): void {
    const first = this.cellStart[cell];
    const end = first + this.listLength[cell];
    const froms = this.from;
    const tos = this.to;
    const robots = this.robot;
    for (let e = first; e < end; e++) {
      if (froms[e] > entryFrom) return;
      if (robots[e] === robot && tos[e] === entryTo && froms[e] === entryFrom) {
        if (froms[e] < from) {
          if (tos[e] >= from) tos[e] = from - 1;
        } else {
          for (let k = e + 1; k < end; k++) {
            froms[k - 1] = froms[k];
            tos[k - 1] = tos[k];
            robots[k - 1] = robots[k];
          }
          this.listLength[cell]--;
        }
        return;
      }
    }
  }

  /** Moves a full cell block to the end of the pool at twice its capacity (repacking the pool when it is used up). */
  private move(cell: number): void {
    const capacity = this.cellCapacity[cell] === 0 ? 4 : 2 * this.cellCapacity[cell];
    if (this.used + capacity > this.from.length) this.repack(capacity);
    const at = this.used;
    const first = this.cellStart[cell];
    const count = this.listLength[cell];
    this.from.copyWithin(at, first, first + count);
    this.to.copyWithin(at, first, first + count);
    this.robot.copyWithin(at, first, first + count);
    this.cellStart[cell] = at;
    this.cellCapacity[cell] = capacity;
    this.used += capacity;
  }

  /** Copies every cell's block into a fresh pool, leaving out the slots of moved blocks, with room for `extra` more. */
  private repack(extra: number): void {
    const cells = this.cells;
    let live = extra;
    for (let c = 0; c < cells; c++) live += this.cellCapacity[c];
    let size = this.from.length;
    while (size < 2 * live) size *= 2;
    const from = new Int32Array(size);
    const to = new Int32Array(size);
    const robot = new Int32Array(size);
    let at = 0;
    for (let c = 0; c < cells; c++) {
      const first = this.cellStart[c];
      const count = this.listLength[c];
      from.set(this.from.subarray(first, first + count), at);
      to.set(this.to.subarray(first, first + count), at);
      robot.set(this.robot.subarray(first, first + count), at);
      this.cellStart[c] = at;
      at += this.cellCapacity[c];
    }
    this.from = from;
    this.to = to;
    this.robot = robot;
    this.used = at;
  }
}

function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}
