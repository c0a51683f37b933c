/**
 * Compact exact distance fields for planners that compare neighbouring cells: for one goal,
 * the grid distance to the goal of any cell of a rectangular window, answered mostly from one
 * bit per cell and otherwise by a short search when a cell is first asked about.
 *
 * What callers need. The 4-connected grid is bipartite, so the distances of two neighbouring
 * cells to any goal differ by exactly 1: a reactive planner ranks a robot's moves by which
 * neighbours are one step closer (PIBT, Okumura et al., AIJ 2022) and a progress watcher
 * follows a moving robot's distance step by step, and both need only the sign of that step,
 * or the distance modulo 4. Absolute distances between arbitrary cells (assignment costs)
 * come from sim/distance-table.ts.
 *
 * Tight cells. The Manhattan distance M(x) = |x - goal|_1 is a lower bound on the grid
 * distance d(x), and d(x) = M(x) exactly when a monotone path (every step toward the goal's
 * column or row) joins x and the goal. Call such cells tight. Tightness obeys a recurrence
 * over the quadrants around the goal: x is tight when it is floor and its neighbour one step
 * toward the goal's column, or the one toward its row, is tight. Row by row outward from the
 * goal's row, the seeds of a row are its floor cells whose neighbour toward the goal's row is
 * tight, and a seed's tightness runs outward along the row through floor cells: a prefix
 * propagation, done 32 cells at a time with the shift-and-mask doubling steps of parallel
 * prefix computation (Kogge & Stone, IEEE Trans. Computers, 1973). A field is that bitmap,
 * one bit per window cell, about a fortieth of the cost of a breadth-first search of the
 * window per cell (Moore 1959, which the previous version ran), and an eighth of its bytes.
 *
 * Ranking from the bitmap. If x is tight, a neighbour n that is one step farther in
 * Manhattan terms has d(n) >= M(n) = d(x) + 1, so it is farther; a neighbour one step closer
 * in Manhattan terms is closer exactly when it is tight (otherwise d(n) > M(n) = d(x) - 1,
 * and d(n) = d(x) + 1). So a robot on a tight cell is ranked from three bits. On the parcel
 * halls of the benchmarks about 97% of the cells robots ask about are tight.
 *
 * Cells that are not tight. Their distance comes from an A* search from the cell toward the
 * goal with the Manhattan heuristic (Hart, Nilsson & Raphael, IEEE Trans. SSC 1968), which
 * stops at the first tight cell it expands. Why that is exact: the heuristic is consistent,
 * so an expanded cell t has g(t) = the distance from the start q to t, and f(t) = g(t) + M(t)
 * is at most d(q) (some open cell on a shortest path from q has f <= d(q), and t was chosen
 * with the least f); the path through t has length g(t) + d(t) = g(t) + M(t) = f(t) >= d(q).
 * So d(q) = f(t). The goal itself is tight, so the search ends; an exhausted search means q
 * is cut off from the goal. The answers are kept per cell. The search runs over the whole
 * floor, not the window, so window edges never make a distance wrong. On a maze-like floor
 * few cells are tight and searching cell by cell walks the same corridors again and again:
 * a field with fewer than half of its window's floor cells tight, or whose searches expand
 * more than a budget of cells, takes one breadth-first search of the whole floor instead and
 * keeps every cell's distance (4 bytes per floor cell), and the goal's larger field, when a
 * robot strays out of the window, covers the whole floor and takes the same distances.
 *
 * Why a window. A robot heading for a goal stands near the rectangle spanned by its cell and
 * the goal, so a field covers that rectangle plus a margin (`margin` cells), and is rebuilt
 * larger when a robot strays outside it (the caller asks again with its new cell). That
 * bounds the bytes per field on big floors (a 480 x 250 floor with 9,180 drops has thousands
 * of live goals).
 *
 * Fields are cached per goal in a least-recently-used cache bounded by bytes. Holders of an
 * evicted field keep using it; only a later lookup builds it again. Deterministic: every
 * answer is the exact distance, whatever order cells are asked in.
 */
import type { Layout } from './layout.ts';

/** Cells of margin around the rectangle spanned by the goal and the requesting cell. */
const defaultMargin = 8;
/** A value's bit 2: the cell reaches the goal (bits 0-1: its distance mod 4). */
export const reachedBit = 4;
/** A* keys are f * tieScale + (tieScale - 1 - g): least f first, and the deeper entry among equal f. */
const tieScale = 2 ** 21;

/** Set bits of a 32-bit word (the SWAR population count). */
function bitCount(v: number): number {
  v -= (v >>> 1) & 0x55555555;
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
  return Math.imul((v + (v >>> 4)) & 0x0f0f0f0f, 0x01010101) >>> 24;
}

export class DistanceField {
  private readonly cellX: Int32Array;
  private readonly cellY: Int32Array;
  private readonly floorWidth: number;
  private readonly floorHeight: number;
  /** The goal's column and row, in the layout and in the window. */
  private readonly goalX: number;
  private readonly goalY: number;
  private readonly goalWindowX: number;
  private readonly goalWindowY: number;
  /** Distances found by search for cells that are not tight, by cell (-1: cut off from the goal). */
  private readonly searched = new Map<number, number>();
  /** Every floor cell's distance (-1: blocked or cut off) once the searches exceeded their budget. */
  private whole: Int32Array | null = null;
  /** Cells the searches for this field expanded. */
  private expanded = 0;

  constructor(
    private readonly owner: DistanceFields,
    readonly goal: number,
    /** Window: columns x0 .. x0 + width - 1, rows y0 .. y0 + height - 1 of the layout. */
    readonly x0: number,
    readonly y0: number,
    readonly width: number,
    readonly height: number,
    /** One bit per window cell, `rowWords` 32-bit words per row: set when the cell is tight. */
    private readonly tight: Int32Array,
    private readonly rowWords: number,
    /** The owner's floor version this field was built under. */
    private readonly epoch: number,
  ) {
    this.cellX = owner.cellX;
    this.cellY = owner.cellY;
    this.floorWidth = owner.layout.width;
    this.floorHeight = owner.layout.height;
    this.goalX = owner.cellX[goal];
    this.goalY = owner.cellY[goal];
    this.goalWindowX = this.goalX - x0;
    this.goalWindowY = this.goalY - y0;
  }

  /** True when `cell` lies inside the window. */
  covers(cell: number): boolean {
    return this.coversXY(this.cellX[cell], this.cellY[cell]);
  }

  coversXY(layoutX: number, layoutY: number): boolean {
    const x = layoutX - this.x0;
    const y = layoutY - this.y0;
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

  /** True when the covered cell at column x, row y of the layout is tight (its distance is its Manhattan distance). */
  tightXY(layoutX: number, layoutY: number): boolean {
    const x = layoutX - this.x0;
    return ((this.tight[(layoutY - this.y0) * this.rowWords + (x >> 5)] >>> (x & 31)) & 1) === 1;
  }

  /** The distance of the covered cell at column x, row y to the goal; -1 when it is blocked or cut off. */
  distanceXY(layoutX: number, layoutY: number): number {
    if (this.tightXY(layoutX, layoutY)) return Math.abs(layoutX - this.goalX) + Math.abs(layoutY - this.goalY);
    const cell = layoutY * this.floorWidth + layoutX;
    if (this.whole !== null) return this.whole[cell];
    const known = this.searched.get(cell);
    if (known !== undefined) return known;
    const owner = this.owner;
    if (this.epoch !== owner.epoch) throw new Error('a distance field was searched after its floor changed: fetch it again after DistanceFields.clear()');
    if (!owner.open(cell, this.goal)) return -1;
    const distance = owner.searchToTight(this, cell);
    this.expanded += owner.lastExpanded;
    if (this.expanded > owner.searchBudget) this.searchWholeFloor();
    else this.searched.set(cell, distance);
    return distance;
  }

  /** True once the field has taken the whole-floor search (a maze-like window, or searches over budget). */
  get searchedWholeFloor(): boolean {
    return this.whole !== null;
  }

  /**
   * Takes every cell's distance from one breadth-first search of the whole floor (no more
   * searches per cell), or from `from`, an earlier field of the same goal and floor that has
   * them.
   */
  searchWholeFloor(from: DistanceField | null = null): void {
    if (this.whole !== null) return;
    this.whole = from !== null && from.whole !== null && from.goal === this.goal && from.epoch === this.epoch ? from.whole : this.owner.wholeFloorDistances(this.goal);
    this.searched.clear();
    this.owner.grew(this, this.whole.byteLength);
  }

  /** The distance of a covered cell to the goal (the window must cover it); -1 when it is blocked or cut off. */
  distance(cell: number): number {
    return this.distanceXY(this.cellX[cell], this.cellY[cell]);
  }

  /**
   * d(to) - d(from) for two neighbouring covered cells that reach the goal, or 0 when `to` is
   * `from`: -1 when `to` is one step closer to the goal, +1 when it is one step farther.
   */
  step(from: number, to: number): number {
    if (from === to) return 0;
    return this.distance(to) > this.distance(from) ? 1 : -1;
  }

  /**
   * How the neighbours of `cell` rank, for the planner's inner loop: bit d (d = 0..3: north,
   * east, south, west, the order of Layout.neighbors) set when the neighbour that way is one
   * step farther from the goal, clear when it is one step closer (bits of blocked neighbours
   * mean nothing); -1 when the cell does not reach the goal; -2 when the window does not
   * cover the cell and its neighbours (ask DistanceFields.to again).
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
    const tight = this.tight;
    const rowWords = this.rowWords;
    const row = y * rowWords;
    if (((tight[row + (x >> 5)] >>> (x & 31)) & 1) === 0) return this.rankAroundSearched(layoutX, layoutY);
    // Tight: neighbours one step farther in Manhattan terms are farther; of the (at most two)
    // one step closer, the tight ones are closer.
    let rank = 15;
    const gx = this.goalWindowX;
    if (x > gx) {
      const k = x - 1;
      if ((tight[row + (k >> 5)] >>> (k & 31)) & 1) rank = 7;
    } else if (x < gx) {
      const k = x + 1;
      if ((tight[row + (k >> 5)] >>> (k & 31)) & 1) rank = 13;
    }
    const gy = this.goalWindowY;
    if (y > gy) {
      if ((tight[row - rowWords + (x >> 5)] >>> (x & 31)) & 1) rank &= 14;
    } else if (y < gy) {
      if ((tight[row + rowWords + (x >> 5)] >>> (x & 31)) & 1) rank &= 11;
    }
    return rank;
  }

  /** rankAroundXY for a covered cell that is not tight: from the distances of the cell and its neighbours. */
  private rankAroundSearched(layoutX: number, layoutY: number): number {
    const here = this.distanceXY(layoutX, layoutY);
    if (here < 0) return -1;
    let rank = 0;
    if (layoutY > 0 && this.distanceXY(layoutX, layoutY - 1) > here) rank |= 1;
    if (layoutX < this.floorWidth - 1 && this.distanceXY(layoutX + 1, layoutY) > here) rank |= 2;
    if (layoutY < this.floorHeight - 1 && this.distanceXY(layoutX, layoutY + 1) > here) rank |= 4;
    if (layoutX > 0 && this.distanceXY(layoutX - 1, layoutY) > here) rank |= 8;
    return rank;
  }

  /** The value of a cell (distance mod 4 | reached bit; 0 when cut off or blocked), or -1 when the window does not cover it. */
  valueAt(cell: number): number {
    return this.valueAtXY(this.cellX[cell], this.cellY[cell]);
  }

  /** valueAt for the cell at column x, row y of the layout (for callers that have them at hand). */
  valueAtXY(layoutX: number, layoutY: number): number {
    if (!this.coversXY(layoutX, layoutY)) return -1;
    const distance = this.distanceXY(layoutX, layoutY);
    return distance < 0 ? 0 : (distance & 3) | reachedBit;
  }

  /** The distance modulo 4 of a covered cell that reaches the goal (tests compare it with a full table). */
  mod4(cell: number): number {
    return this.distance(cell) & 3;
  }

  /** True when a path joins the covered `cell` and the goal. */
  reaches(cell: number): boolean {
    return this.distance(cell) >= 0;
  }

  get bytes(): number {
    return this.tight.byteLength + (this.whole === null ? 0 : this.whole.byteLength);
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
  readonly cellX: Int32Array;
  readonly cellY: Int32Array;
  readonly budgetBytes: number;
  /** Bumped by `clear()`: fields built before it must not search any more. */
  epoch = 0;
  /** The floor as bits, `floorWords` words per row (bit x of a row: `passable` at column x). */
  private readonly floorWords: number;
  private readonly floorBits: Int32Array;
  private floorBitsEpoch = -1;
  private readonly rowScratch: Int32Array;
  // Search scratch: tentative distances, stamps (this search's id: seen, id + 1: expanded), heap.
  private readonly tentative: Int32Array;
  private readonly stamp: Int32Array;
  private stampId = 0;
  private heapKey = new Float64Array(256);
  private heapCell = new Int32Array(256);
  private queue = new Int32Array(0);
  /** Tight cells counted so far in the bitmap being built (`countRow`). */
  private tightCells = 0;
  /** Cells the last `searchToTight` expanded. */
  lastExpanded = 0;
  /** Cells a field's searches may expand before it takes a whole-floor breadth-first search instead. */
  readonly searchBudget: number;
  /** Fields built so far (first builds and enlargements), and cells swept or expanded for them (the work done). */
  builds = 0;
  cellsSearched = 0;
  /** Searches run for cells that are not tight, and fields that fell back to a whole-floor search. */
  searches = 0;
  wholeFloorSearches = 0;
  /** Fields rebuilt larger because a caller asked about a cell outside the cached window. */
  enlargements = 0;

  /**
   * `budgetBytes` bounds the cache (default 256 MiB); at least 16 whole-floor fields are kept.
   * `passable` (default the layout's own) lets a caller search a floor with extra cells closed,
   * e.g. cells of robots that stand still for long (PIBT's detour fields): the caller owns the
   * array, and must call `clear()` after changing it (fields fetched before then must not be
   * used again). A goal is searched from even when its own cell is closed (a robot heads for
   * a goal taken by a fixed robot up to its neighbours).
   */
  constructor(
    readonly layout: Layout,
    budgetBytes = 256 * 1024 * 1024,
    readonly margin = defaultMargin,
    private readonly passable: Uint8Array = layout.passable,
  ) {
    const cells = layout.cellCount;
    this.cellX = new Int32Array(cells);
    this.cellY = new Int32Array(cells);
    this.byGoal = new Array<DistanceField | null>(cells).fill(null);
    for (let c = 0; c < cells; c++) {
      this.cellX[c] = c % layout.width;
      this.cellY[c] = Math.floor(c / layout.width);
    }
    // One spare word per row, so a window's row can be read at any bit offset.
    this.floorWords = (layout.width >> 5) + 2;
    this.floorBits = new Int32Array(this.floorWords * layout.height);
    this.rowScratch = new Int32Array(this.floorWords);
    this.tentative = new Int32Array(cells);
    this.stamp = new Int32Array(cells);
    // A search expansion costs several times a breadth-first step: past about a sixteenth of
    // the floor in expansions, one whole-floor search is the cheaper way on.
    this.searchBudget = Math.max(1024, cells >> 4);
    const wholeFloorBytes = 4 * layout.height * ((layout.width + 31) >> 5);
    this.budgetBytes = Math.max(16 * wholeFloorBytes, budgetBytes);
  }

  /** Fields cached now. */
  get size(): number {
    return this.cache.size;
  }

  /** Forgets every cached field (after the caller changed `passable`); fields fetched before must not be used again. */
  clear(): void {
    // Only the cached goals' slots (a caller may clear at every step: PIBT's detour fields).
    for (const goal of this.cache.keys()) this.byGoal[goal] = null;
    this.cache.clear();
    this.cachedBytes = 0;
    this.epoch++;
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
    // A goal whose field went over its search budget is a maze-like case: its larger field
    // covers the whole floor and takes the whole-floor search at once, so it is not enlarged
    // again.
    const maze = cached !== null && cached.searchedWholeFloor;
    const field = maze ? this.build(goal, 0, 0, this.layout.width - 1, this.layout.height - 1, cached) : this.build(goal, x0, y0, x1, y1, null);
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

  /** True when a path may pass through `cell` on the way to `goal` (the goal counts as open unless the layout blocks it). */
  open(cell: number, goal: number): boolean {
    return this.passable[cell] === 1 || (cell === goal && this.layout.passable[goal] === 1);
  }

  /** Accounts for bytes a cached field took on after it was built. */
  grew(field: DistanceField, bytes: number): void {
    if (this.byGoal[field.goal] === field) this.cachedBytes += bytes;
  }

  /**
   * Builds the tightness bitmap of the window columns x0..x1, rows y0..y1 plus a margin;
   * `from` (or null) is the goal's earlier field whose whole-floor distances the new one takes.
   */
  private build(goal: number, x0: number, y0: number, x1: number, y1: number, from: DistanceField | null): DistanceField {
    this.builds++;
    const layout = this.layout;
    const margin = this.margin;
    const wx0 = Math.max(0, x0 - margin);
    const wy0 = Math.max(0, y0 - margin);
    const w = Math.min(layout.width - 1, x1 + margin) - wx0 + 1;
    const h = Math.min(layout.height - 1, y1 + margin) - wy0 + 1;
    const rowWords = (w + 31) >> 5;
    const tight = new Int32Array(h * rowWords);
    this.cellsSearched += w * h;
    if (this.floorBitsEpoch !== this.epoch) this.loadFloorBits();
    const gx = this.cellX[goal] - wx0;
    const gy = this.cellY[goal] - wy0;
    const goalWord = gx >> 5;
    const goalBit = 1 << (gx & 31);
    const eastMask = -1 << (gx & 31);
    const westMask = (gx & 31) === 31 ? -1 : ~(-1 << ((gx & 31) + 1));
    const goalOpen = this.open(goal, goal);
    this.tightCells = 0;
    // The goal's row: tightness runs both ways from the goal along the floor.
    this.loadRow(wy0 + gy, wx0, w);
    if (goalOpen) {
      this.rowScratch[goalWord] |= goalBit;
      this.fillRow(tight, gy * rowWords, -1, rowWords, goalWord, eastMask, westMask, goalBit);
    }
    let floorCells = this.countRow(tight, gy * rowWords, rowWords);
    // Then row by row away from it, seeded from the row before (toward the goal).
    for (let y = gy - 1; y >= 0; y--) {
      this.loadRow(wy0 + y, wx0, w);
      this.fillRow(tight, y * rowWords, (y + 1) * rowWords, rowWords, goalWord, eastMask, westMask, 0);
      floorCells += this.countRow(tight, y * rowWords, rowWords);
    }
    for (let y = gy + 1; y < h; y++) {
      this.loadRow(wy0 + y, wx0, w);
      this.fillRow(tight, y * rowWords, (y - 1) * rowWords, rowWords, goalWord, eastMask, westMask, 0);
      floorCells += this.countRow(tight, y * rowWords, rowWords);
    }
    const field = new DistanceField(this, goal, wx0, wy0, w, h, tight, rowWords, this.epoch);
    // Fewer than half the window's floor cells tight (a maze-like floor): the searches per cell
    // would cost more than one whole-floor search, so take that at once (or the distances of
    // `from`, the goal's smaller field that took one).
    if (from !== null || 2 * this.tightCells < floorCells) field.searchWholeFloor(from);
    return field;
  }

  /** Floor cells of the row in rowScratch; adds the row's tight cells to `tightCells`. */
  private countRow(tight: Int32Array, at: number, rowWords: number): number {
    let floor = 0;
    let tightCount = 0;
    for (let k = 0; k < rowWords; k++) {
      floor += bitCount(this.rowScratch[k]);
      tightCount += bitCount(tight[at + k]);
    }
    this.tightCells += tightCount;
    return floor;
  }

  /** The floor's passable cells as bits per row. */
  private loadFloorBits(): void {
    const { width, height } = this.layout;
    const bits = this.floorBits;
    const words = this.floorWords;
    const passable = this.passable;
    bits.fill(0);
    for (let y = 0; y < height; y++) {
      const base = y * words;
      const from = y * width;
      for (let x = 0; x < width; x++) if (passable[from + x]) bits[base + (x >> 5)] |= 1 << (x & 31);
    }
    this.floorBitsEpoch = this.epoch;
  }

  /** Row y of the floor, columns x0 .. x0 + w - 1, into rowScratch (bit 0: column x0). */
  private loadRow(y: number, x0: number, w: number): void {
    const bits = this.floorBits;
    const row = this.rowScratch;
    const base = y * this.floorWords + (x0 >> 5);
    const shift = x0 & 31;
    const words = (w + 31) >> 5;
    if (shift === 0) for (let k = 0; k < words; k++) row[k] = bits[base + k];
    else for (let k = 0; k < words; k++) row[k] = (bits[base + k] >>> shift) | (bits[base + k + 1] << (32 - shift));
    // Columns past the window are never read (fills run away from the goal's column, and the
    // last word lies east of it); clearing them keeps the bitmap to the window.
    const tail = w & 31;
    if (tail !== 0) row[words - 1] &= ~(-1 << tail);
  }

  /**
   * One row of the tightness recurrence: seeds are the row's floor cells whose neighbour in
   * the previous row (`previous`, the row toward the goal) is tight, or the goal bit on the
   * goal's row (`previous` < 0); tightness then runs east from seeds at or east of the goal's
   * column and west from seeds at or west of it, through floor cells (rowScratch).
   */
  private fillRow(tight: Int32Array, at: number, previous: number, rowWords: number, goalWord: number, eastMask: number, westMask: number, goalBit: number): void {
    const floor = this.rowScratch;
    let carry = 0;
    for (let k = goalWord; k < rowWords; k++) {
      let p = floor[k];
      let g = previous < 0 ? (k === goalWord ? goalBit : 0) : tight[previous + k] & p;
      if (k === goalWord) g &= eastMask;
      g |= carry & p;
      // Occluded fill toward higher bits: after the steps with shifts 1, 2, 4, 8, 16 a seed has
      // run through every floor bit above it up to the first gap.
      g |= (g << 1) & p;
      p &= p << 1;
      g |= (g << 2) & p;
      p &= p << 2;
      g |= (g << 4) & p;
      p &= p << 4;
      g |= (g << 8) & p;
      p &= p << 8;
      g |= (g << 16) & p;
      tight[at + k] |= g;
      carry = g >>> 31;
    }
    carry = 0;
    for (let k = goalWord; k >= 0; k--) {
      let p = floor[k];
      let g = previous < 0 ? (k === goalWord ? goalBit : 0) : tight[previous + k] & p;
      if (k === goalWord) g &= westMask;
      g |= (carry << 31) & p;
      g |= (g >>> 1) & p;
      p &= p >>> 1;
      g |= (g >>> 2) & p;
      p &= p >>> 2;
      g |= (g >>> 4) & p;
      p &= p >>> 4;
      g |= (g >>> 8) & p;
      p &= p >>> 8;
      g |= (g >>> 16) & p;
      tight[at + k] |= g;
      carry = g & 1;
    }
  }

  /**
   * The distance from the open cell `start` to the field's goal, by A* over the whole floor
   * with the Manhattan heuristic, ending at the first tight covered cell expanded (see the
   * header); -1 when the search runs out (cut off from the goal). Sets `lastExpanded`.
   */
  searchToTight(field: DistanceField, start: number): number {
    this.searches++;
    const { width, height } = this.layout;
    const cellX = this.cellX;
    const cellY = this.cellY;
    const tentative = this.tentative;
    const stamp = this.stamp;
    const goal = field.goal;
    const gx = cellX[goal];
    const gy = cellY[goal];
    const seen = this.nextStamp();
    const expanded = seen + 1;
    let size = 0;
    let count = 0;
    tentative[start] = 0;
    stamp[start] = seen;
    size = this.heapPush(size, (Math.abs(cellX[start] - gx) + Math.abs(cellY[start] - gy)) * tieScale + tieScale - 1, start);
    let result = -1;
    while (size > 0) {
      const c = this.heapCell[0];
      size = this.heapPop(size);
      if (stamp[c] === expanded) continue;
      stamp[c] = expanded;
      count++;
      const g = tentative[c];
      const x = cellX[c];
      const y = cellY[c];
      if (c === goal || (field.coversXY(x, y) && field.tightXY(x, y))) {
        result = g + Math.abs(x - gx) + Math.abs(y - gy);
        break;
      }
      const next = g + 1;
      for (let d = 0; d < 4; d++) {
        let n: number;
        let nx = x;
        let ny = y;
        if (d === 0) {
          if (y === 0) continue;
          ny--;
        } else if (d === 1) {
          if (x === width - 1) continue;
          nx++;
        } else if (d === 2) {
          if (y === height - 1) continue;
          ny++;
        } else {
          if (x === 0) continue;
          nx--;
        }
        n = ny * width + nx;
        if (stamp[n] === expanded || !this.open(n, goal)) continue;
        if (stamp[n] === seen && tentative[n] <= next) continue;
        stamp[n] = seen;
        tentative[n] = next;
        size = this.heapPush(size, (next + Math.abs(nx - gx) + Math.abs(ny - gy)) * tieScale + (tieScale - 1 - next), n);
      }
    }
    this.lastExpanded = count;
    this.cellsSearched += count;
    return result;
  }

  /** A fresh pair of stamps (id: seen or reached, id + 1: expanded) for one search. */
  private nextStamp(): number {
    if (this.stampId > 0x3ffffff0) {
      this.stamp.fill(0);
      this.stampId = 0;
    }
    this.stampId += 2;
    return this.stampId;
  }

  private heapPush(size: number, key: number, cell: number): number {
    if (size === this.heapKey.length) {
      const keys = new Float64Array(size * 2);
      keys.set(this.heapKey);
      this.heapKey = keys;
      const cells = new Int32Array(size * 2);
      cells.set(this.heapCell);
      this.heapCell = cells;
    }
    const keys = this.heapKey;
    const cells = this.heapCell;
    let i = size;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (keys[parent] <= key) break;
      keys[i] = keys[parent];
      cells[i] = cells[parent];
      i = parent;
    }
    keys[i] = key;
    cells[i] = cell;
    return size + 1;
  }

  /** Removes the heap's top; returns the new size. */
  private heapPop(size: number): number {
    const keys = this.heapKey;
    const cells = this.heapCell;
    const last = size - 1;
    const key = keys[last];
    const cell = cells[last];
    let i = 0;
    for (;;) {
      let child = 2 * i + 1;
      if (child >= last) break;
      if (child + 1 < last && keys[child + 1] < keys[child]) child++;
      if (keys[child] >= key) break;
      keys[i] = keys[child];
      cells[i] = cells[child];
      i = child;
    }
    keys[i] = key;
    cells[i] = cell;
    return last;
  }

  /** Every floor cell's distance to `goal` (-1: blocked or cut off), by one breadth-first search of the whole floor. */
  wholeFloorDistances(goal: number): Int32Array {
    this.wholeFloorSearches++;
    const width = this.layout.width;
    const cellX = this.cellX;
    const passable = this.passable;
    // `tentative` holds the distances, `stamp` marks the cells reached.
    const distance = this.tentative;
    const stamp = this.stamp;
    const reached = this.nextStamp();
    if (this.queue.length < this.layout.cellCount) this.queue = new Int32Array(this.layout.cellCount);
    const queue = this.queue;
    let tail = 0;
    if (this.open(goal, goal)) {
      stamp[goal] = reached;
      distance[goal] = 0;
      queue[tail++] = goal;
    }
    const last = this.layout.cellCount - width;
    for (let head = 0; head < tail; head++) {
      const c = queue[head];
      const x = cellX[c];
      const next = distance[c] + 1;
      let n = c - width;
      if (c >= width && stamp[n] !== reached && passable[n]) {
        stamp[n] = reached;
        distance[n] = next;
        queue[tail++] = n;
      }
      n = c + 1;
      if (x < width - 1 && stamp[n] !== reached && passable[n]) {
        stamp[n] = reached;
        distance[n] = next;
        queue[tail++] = n;
      }
      n = c + width;
      if (c < last && stamp[n] !== reached && passable[n]) {
        stamp[n] = reached;
        distance[n] = next;
        queue[tail++] = n;
      }
      n = c - 1;
      if (x > 0 && stamp[n] !== reached && passable[n]) {
        stamp[n] = reached;
        distance[n] = next;
        queue[tail++] = n;
      }
    }
    this.cellsSearched += tail;
    const out = new Int32Array(this.layout.cellCount).fill(-1);
    for (let k = 0; k < tail; k++) out[queue[k]] = distance[queue[k]];
    return out;
  }
}
