/**
 * Compact exact distance fields for planners that compare neighbouring cells: for one goal,
 * the grid distance of every cell of a rectangular window to the goal, modulo 4, one byte
 * per cell, from one breadth-first search (Moore 1959) inside the window.
 *
 * Why modulo 4 is enough. The 4-connected grid is bipartite, so the distances of two
 * neighbouring cells to any goal differ by exactly 1. Two bits tell which way:
 * d(b) - d(a) is +1 when (d(b) - d(a)) mod 4 = 1 and -1 when it is 3. That is all a reactive
 * planner needs to rank a robot's moves (PIBT orders a robot's neighbours by distance to its
 * goal, Okumura et al., AIJ 2022) and all a progress watcher needs to follow a moving robot's
 * distance step by step. Absolute distances between arbitrary cells (assignment costs) come
 * from sim/distance-table.ts.
 *
 * Why a window. A full Int32 table is 4 bytes per cell: on a 480 x 250 floor (120,000 cells)
 * with 9,180 drop points, thousands of robots heading for different drops need gigabytes,
 * or a bounded cache that misses on almost every lookup once the live goals outnumber its
 * slots. Even one byte per cell leaves one 120,000-cell search per drop. A robot heading for
 * a goal only ever stands near the rectangle spanned by its cell and the goal, so a field
 * covers that rectangle plus a margin (`margin` cells) and is enlarged when a robot strays
 * outside it (the caller asks again with its new cell).
 *
 * Why the window's distances are exact. Let R be the window, d_R the distance inside R (paths
 * that stay in R) and d the true distance; d_R >= d. Call an exit a pair (b, o) of a cell b of
 * R and a floor cell o outside R next to it. Suppose every exit cell reaches the goal inside
 * R and, for every two exits (b1, o1) and (b2, o2), d_R(b1) <= d_R(b2) + 2 + |o1 - o2|_1
 * (an excursion that leaves R from b1 through o1 and comes back through o2 to b2 is at least
 * that long: one step out, the Manhattan distance outside, one step in). Take a shortest path
 * from a cell x of R to the goal and cut it where it leaves and re-enters R: every piece
 * inside R from u to v is at least d_R(u) - d_R(v) long (triangle inequality in R) and every
 * excursion from b1 to b2 at least d_R(b1) - d_R(b2). The sum telescopes to
 * d(x) >= d_R(x) - d_R(goal) = d_R(x), so d_R = d on R. Cells of R that do not reach the goal
 * inside R then do not reach it at all (a path out of their pocket would leave through an
 * exit, and every exit cell reaches the goal). Only an exit whose d_R exceeds its Manhattan
 * distance to the goal can break the condition (the right side is at least
 * |b1 - goal|_1, by the triangle inequality), so the check is one pass over the exits plus,
 * for each such exit, one more pass. When it fails, or would cost more than the search, the
 * window grows (margin x 4, up to the whole floor, which has no exits and is exact by
 * construction).
 *
 * Fields are cached per goal in a least-recently-used cache bounded by bytes. Holders of an
 * evicted field keep using it; only a later lookup builds it again. Deterministic: a field
 * is a pure function of the layout, the goal and the cells it was asked to cover.
 */
import type { Layout } from './layout.ts';

/** Cells of margin around the rectangle spanned by the goal and the requesting cell. */
const defaultMargin = 8;
/** A stored byte: distance mod 4 in bits 0-1, bit 2 set when the cell reaches the goal. */
export const reachedBit = 4;

export class DistanceField {
  constructor(
    readonly goal: number,
    /** Window: columns x0 .. x0 + width - 1, rows y0 .. y0 + height - 1 of the layout. */
    readonly x0: number,
    readonly y0: number,
    readonly width: number,
    readonly height: number,
    /** One byte per cell of the window padded by one blocked cell on every side. */
    private readonly values: Uint8Array,
    private readonly cellX: Int32Array,
    private readonly cellY: Int32Array,
    private readonly floorWidth: number,
    private readonly floorHeight: number,
  ) {}

  /** True when `cell` lies inside the window (its value is exact). */
  covers(cell: number): boolean {
    const x = this.cellX[cell] - this.x0;
    const y = this.cellY[cell] - this.y0;
    return x >= 0 && y >= 0 && x < this.width && y < this.height;
  }

  /** True when `cell` and every neighbour it has on the floor lie inside the window. */
  coversAround(cell: number): boolean {
    const x = this.cellX[cell] - this.x0;
    const y = this.cellY[cell] - this.y0;
    return (
      x >= 0 &&
      y >= 0 &&
      x < this.width &&
      y < this.height &&
      (x > 0 || this.x0 === 0) &&
      (y > 0 || this.y0 === 0) &&
      (x < this.width - 1 || this.x0 + this.width === this.floorWidth) &&
      (y < this.height - 1 || this.y0 + this.height === this.floorHeight)
    );
  }

  /**
   * d(to) - d(from) for two neighbouring covered cells that reach the goal, or 0 when `to` is
   * `from`: -1 when `to` is one step closer to the goal, +1 when it is one step farther.
   */
  step(from: number, to: number): number {
    if (from === to) return 0;
    const a = this.values[this.index(from)];
    const b = this.values[this.index(to)];
    return ((b - a) & 3) === 1 ? 1 : -1;
  }

  /**
   * How the neighbours of `cell` rank, in one window lookup for the planner's inner loop:
   * bit d (d = 0..3: north, east, south, west, the order of Layout.neighbors) set when the
   * neighbour that way is one step farther from the goal, clear when it is one step closer
   * (bits of blocked neighbours mean nothing); -1 when the cell does not reach the goal; -2
   * when the window does not cover the cell and its neighbours (ask DistanceFields.to again).
   */
  rankAround(cell: number): number {
    return this.rankAroundXY(this.cellX[cell], this.cellY[cell]);
  }

  /** rankAround for the cell at column x, row y of the layout (for callers that have them at hand: a cell-to-column table lookup per call is a cache miss on big halls). */
  rankAroundXY(layoutX: number, layoutY: number): number {
    const x = layoutX - this.x0;
    const y = layoutY - this.y0;
    const width = this.width;
    if (x < 0 || y < 0 || x >= width || y >= this.height) return -2;
    if ((x === 0 && this.x0 !== 0) || (y === 0 && this.y0 !== 0)) return -2;
    if ((x === width - 1 && this.x0 + width !== this.floorWidth) || (y === this.height - 1 && this.y0 + this.height !== this.floorHeight)) return -2;
    const values = this.values;
    const pw = width + 2;
    const i = (y + 1) * pw + x + 1;
    const here = values[i];
    if ((here & reachedBit) === 0) return -1;
    return (
      (((values[i - pw] - here) & 3) === 1 ? 1 : 0) |
      (((values[i + 1] - here) & 3) === 1 ? 2 : 0) |
      (((values[i + pw] - here) & 3) === 1 ? 4 : 0) |
      (((values[i - 1] - here) & 3) === 1 ? 8 : 0)
    );
  }

  /** The stored byte of a cell (distance mod 4 | reached bit), or -1 when the window does not cover it. */
  valueAt(cell: number): number {
    const x = this.cellX[cell] - this.x0;
    const y = this.cellY[cell] - this.y0;
    if (x < 0 || y < 0 || x >= this.width || y >= this.height) return -1;
    return this.values[(y + 1) * (this.width + 2) + x + 1];
  }

  /** valueAt for the cell at column x, row y of the layout (for callers that have them at hand). */
  valueAtXY(layoutX: number, layoutY: number): number {
    const x = layoutX - this.x0;
    const y = layoutY - this.y0;
    if (x < 0 || y < 0 || x >= this.width || y >= this.height) return -1;
    return this.values[(y + 1) * (this.width + 2) + x + 1];
  }

  /** The distance modulo 4 of a covered cell (tests compare it with a full table). */
  mod4(cell: number): number {
    return this.values[this.index(cell)] & 3;
  }

  /** True when a path joins the covered `cell` and the goal. */
  reaches(cell: number): boolean {
    return (this.values[this.index(cell)] & reachedBit) !== 0;
  }

  get bytes(): number {
    return this.values.byteLength;
  }

  private index(cell: number): number {
    return (this.cellY[cell] - this.y0 + 1) * (this.width + 2) + (this.cellX[cell] - this.x0 + 1);
  }
}

export class DistanceFields {
  private readonly cache = new Map<number, DistanceField>();
  /**
   * The cached field per goal cell (null: none), the same entries as `cache`: the lookup of
   * every call is an array read, the Map keeps only the recency order for eviction.
   */
  private readonly byGoal: (DistanceField | null)[];
  private cachedBytes = 0;
  private readonly cellX: Int32Array;
  private readonly cellY: Int32Array;
  private unvisited = new Uint8Array(0);
  private distance = new Int32Array(0);
  private queue = new Int32Array(0);
  readonly budgetBytes: number;
  /** Fields built so far, and cells searched for them (the work done). */
  builds = 0;
  cellsSearched = 0;
  /** Windows whose exactness check failed and were grown. */
  windowsGrown = 0;
  /** Fields rebuilt larger because a caller asked about a cell outside the cached window. */
  enlargements = 0;

  /**
   * `budgetBytes` bounds the cache (default 256 MiB); at least 16 whole-floor fields are kept.
   * `passable` (default the layout's own) lets a caller search a floor with extra cells closed,
   * e.g. cells of robots that stand still for long (PIBT's detour fields): the caller owns the
   * array, and must call `clear()` after changing it. A goal is searched from even when its own
   * cell is closed (a robot heads for a goal taken by a fixed robot up to its neighbours).
   */
  constructor(
    readonly layout: Layout,
    budgetBytes = 256 * 1024 * 1024,
    readonly margin = defaultMargin,
    private readonly passable: Uint8Array = layout.passable,
  ) {
    this.cellX = new Int32Array(layout.cellCount);
    this.cellY = new Int32Array(layout.cellCount);
    this.byGoal = new Array<DistanceField | null>(layout.cellCount).fill(null);
    for (let c = 0; c < layout.cellCount; c++) {
      this.cellX[c] = c % layout.width;
      this.cellY[c] = Math.floor(c / layout.width);
    }
    this.budgetBytes = Math.max(16 * (layout.width + 2) * (layout.height + 2), budgetBytes);
  }

  /** Fields cached now. */
  get size(): number {
    return this.cache.size;
  }

  /** Forgets every cached field (after the caller changed `passable`); holders keep theirs. */
  clear(): void {
    // Only the cached goals' slots (a caller may clear at every step: PIBT's detour fields).
    for (const goal of this.cache.keys()) this.byGoal[goal] = null;
    this.cache.clear();
    this.cachedBytes = 0;
  }

  /** The field of `goal` covering `near` and its neighbours, built or enlarged when needed. */
  to(goal: number, near: number): DistanceField {
    const cached = this.byGoal[goal];
    if (cached !== null && cached.coversAround(near)) {
      // Refresh recency only when the cache can overflow; a Map keeps insertion order.
      if (this.cachedBytes + cached.bytes > this.budgetBytes) {
        this.cache.delete(goal);
        this.cache.set(goal, cached);
      }
      return cached;
    }
    let x0 = Math.min(this.cellX[goal], this.cellX[near]);
    let y0 = Math.min(this.cellY[goal], this.cellY[near]);
    let x1 = Math.max(this.cellX[goal], this.cellX[near]);
    let y1 = Math.max(this.cellY[goal], this.cellY[near]);
    if (cached !== null) {
      this.enlargements++;
      // Keep what the old window covered, so robots already inside it stay covered.
      x0 = Math.min(x0, cached.x0);
      y0 = Math.min(y0, cached.y0);
      x1 = Math.max(x1, cached.x0 + cached.width - 1);
      y1 = Math.max(y1, cached.y0 + cached.height - 1);
      this.cachedBytes -= cached.bytes;
      this.cache.delete(goal);
      this.byGoal[goal] = null;
    }
    const field = this.build(goal, x0, y0, x1, y1);
    while (this.cache.size > 0 && this.cachedBytes + field.bytes > this.budgetBytes) {
      const oldest = this.cache.keys().next().value as number;
      this.cachedBytes -= this.cache.get(oldest)!.bytes;
      this.cache.delete(oldest);
      this.byGoal[oldest] = null;
    }
    this.cache.set(goal, field);
    this.byGoal[goal] = field;
    this.cachedBytes += field.bytes;
    return field;
  }

  /** Builds an exact field whose window holds columns x0..x1 and rows y0..y1 plus a margin. */
  private build(goal: number, x0: number, y0: number, x1: number, y1: number): DistanceField {
    const { width, height } = this.layout;
    for (let margin = this.margin; ; margin *= 4) {
      const wx0 = Math.max(0, x0 - margin);
      const wy0 = Math.max(0, y0 - margin);
      const wx1 = Math.min(width - 1, x1 + margin);
      const wy1 = Math.min(height - 1, y1 + margin);
      const whole = wx0 === 0 && wy0 === 0 && wx1 === width - 1 && wy1 === height - 1;
      const field = this.search(goal, wx0, wy0, wx1 - wx0 + 1, wy1 - wy0 + 1, !whole);
      if (field) return field;
      this.windowsGrown++;
    }
  }

  /** Breadth-first search inside the window; null when `check` is set and the window is not provably exact. */
  private search(goal: number, x0: number, y0: number, w: number, h: number, check: boolean): DistanceField | null {
    this.builds++;
    const layout = this.layout;
    const pw = w + 2;
    const size = pw * (h + 2);
    if (this.unvisited.length < size) {
      this.unvisited = new Uint8Array(size);
      this.distance = new Int32Array(size);
      this.queue = new Int32Array(size);
    }
    const unvisited = this.unvisited;
    unvisited.fill(0, 0, size);
    const passable = this.passable;
    for (let y = 0; y < h; y++) {
      const from = (y0 + y) * layout.width + x0;
      unvisited.set(passable.subarray(from, from + w), (y + 1) * pw + 1);
    }
    // The exactness check needs the distances of the window's ring cells only: they are
    // marked 2 in `unvisited` (1: an interior floor cell) and get their distance when queued.
    if (check) {
      const bottom = h * pw;
      for (let x = 1; x <= w; x++) {
        unvisited[pw + x] <<= 1;
        if (h > 1) unvisited[bottom + x] <<= 1;
      }
      for (let y = 2; y < h; y++) {
        unvisited[y * pw + 1] <<= 1;
        if (w > 1) unvisited[y * pw + w] <<= 1;
      }
    }
    const values = new Uint8Array(size);
    const distance = this.distance;
    const queue = this.queue;
    const start = (this.cellY[goal] - y0 + 1) * pw + (this.cellX[goal] - x0 + 1);
    let tail = 0;
    if (unvisited[start] || layout.passable[goal]) {
      unvisited[start] = 0;
      distance[start] = 0;
      queue[tail++] = start;
    }
    let head = 0;
    let layer = 0;
    // Layer by layer, so the distance of a whole layer is one number (its index).
    while (head < tail) {
      const end = tail;
      const value = (layer & 3) | reachedBit;
      const below = layer + 1;
      for (; head < end; head++) {
        const p = queue[head];
        values[p] = value;
        let n = p - pw;
        let u = unvisited[n];
        if (u) {
          unvisited[n] = 0;
          queue[tail++] = n;
          if (u === 2) distance[n] = below;
        }
        n = p + 1;
        u = unvisited[n];
        if (u) {
          unvisited[n] = 0;
          queue[tail++] = n;
          if (u === 2) distance[n] = below;
        }
        n = p + pw;
        u = unvisited[n];
        if (u) {
          unvisited[n] = 0;
          queue[tail++] = n;
          if (u === 2) distance[n] = below;
        }
        n = p - 1;
        u = unvisited[n];
        if (u) {
          unvisited[n] = 0;
          queue[tail++] = n;
          if (u === 2) distance[n] = below;
        }
      }
      layer++;
    }
    this.cellsSearched += tail;
    if (check && !this.exact(goal, x0, y0, w, h, values, tail)) return null;
    return new DistanceField(goal, x0, y0, w, h, values, this.cellX, this.cellY, layout.width, layout.height);
  }

  /** The exactness condition of the header, over the exits of the window. */
  private exact(goal: number, x0: number, y0: number, w: number, h: number, values: Uint8Array, searched: number): boolean {
    const layout = this.layout;
    const width = layout.width;
    const passable = this.passable;
    const pw = w + 2;
    const gx = this.cellX[goal];
    const gy = this.cellY[goal];
    const outsideX: number[] = [];
    const outsideY: number[] = [];
    const exitDistance: number[] = [];
    const excess: number[] = [];
    // (x, y) on the ring of the window with floor at (ox, oy) just outside it is an exit.
    const consider = (x: number, y: number, ox: number, oy: number): boolean => {
      // A closed goal is still where paths end: it counts as an exit like an open cell.
      if (!passable[y * width + x] && y * width + x !== goal) return true;
      if (ox < 0 || oy < 0 || ox >= width || oy >= layout.height || !passable[oy * width + ox]) return true;
      const p = (y - y0 + 1) * pw + (x - x0 + 1);
      if ((values[p] & reachedBit) === 0) return false;
      const d = this.distance[p];
      outsideX.push(ox);
      outsideY.push(oy);
      exitDistance.push(d);
      if (d > Math.abs(x - gx) + Math.abs(y - gy)) excess.push(exitDistance.length - 1);
      return true;
    };
    for (let x = x0; x < x0 + w; x++) {
      if (!consider(x, y0, x, y0 - 1)) return false;
      if (!consider(x, y0 + h - 1, x, y0 + h)) return false;
    }
    for (let y = y0; y < y0 + h; y++) {
      if (!consider(x0, y, x0 - 1, y)) return false;
      if (!consider(x0 + w - 1, y, x0 + w, y)) return false;
    }
    // Only an exit whose distance exceeds its Manhattan distance to the goal can break the
    // condition; bound the pair checks by the search's own cost.
    const exits = exitDistance.length;
    if (excess.length * exits > 4 * searched + 1024) return false;
    for (const i of excess) {
      const xi = outsideX[i];
      const yi = outsideY[i];
      const di = exitDistance[i];
      for (let j = 0; j < exits; j++) {
        if (di > exitDistance[j] + 2 + Math.abs(xi - outsideX[j]) + Math.abs(yi - outsideY[j])) return false;
      }
    }
    return true;
  }
}
