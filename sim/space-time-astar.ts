/**
 * Space-time A* for one robot against reserved paths (Silver 2005, "Cooperative
 * Pathfinding"; the low level of prioritized planning, Erdmann & Lozano-Perez 1987).
 * States are (cell, tick); actions are wait or a move to a 4-neighbour; a state is
 * admissible when the reservation table leaves the cell free at that tick and the move
 * does not swap with another robot. The heuristic is the exact grid distance to the goal
 * (a BFS table), which is consistent, so the first goal state popped is the earliest
 * arrival that satisfies the goal condition.
 *
 * Goal conditions: `holdTicks >= 0` means the robot must be able to stay on the goal for
 * that many ticks after arriving (handling at a station); `restForever` means nobody else
 * may use the goal cell at any later tick (the end of a token-passing path).
 *
 * The heuristic also knows when the goal itself becomes available: before a search, one
 * backward pass over the goal cell's reservations gives, for every tick k, the earliest
 * tick >= k at which the goal condition holds; h(cell, t) = ready[t + dist(cell)] - t. It
 * is admissible and consistent (ready is non-decreasing), and it stops the search from
 * flooding space-time while a busy station is still taken.
 *
 * Before searching, a breadth-first pass checks that the goal can be reached at all around
 * the robots that rest for good (a rest that began before the start tick never ends on its
 * own): on a crowded floor most failed searches are of this kind, and the pass costs
 * O(cells) where the space-time search would spend its whole expansion budget.
 *
 * Memory is reused across searches (typed arrays sized once, a stamp per (tick mod
 * horizon, cell) for the closed set). Cost is bounded by `maxExpansions`; a search that
 * exceeds it or runs past the reservation horizon fails and returns null.
 */
import type { Layout } from './layout.ts';
import type { ReservationTable } from './reservation-table.ts';

export interface SearchRequest {
  robot: number;
  start: number;
  startTick: number;
  goal: number;
  /** Distances to `goal` (a BFS table). */
  heuristic: Int32Array;
  /** Ticks the robot must be able to stay on the goal after arriving; ignored when restForever. */
  holdTicks: number;
  restForever: boolean;
}

export class SpaceTimeAStar {
  private capacity: number;
  private nodeCell: Int32Array;
  private nodeTick: Int32Array;
  private nodeParent: Int32Array;
  private heapNode: Int32Array;
  private heapKey: Float64Array;
  private heapSize = 0;
  private closed: Int32Array;
  private ready = new Int32Array(256);
  private readonly reachStamp: Int32Array;
  private readonly reachQueue: Int32Array;
  private reachId = 0;
  /** Searches that failed the reachability pass without expanding a state. */
  unreachableSkips = 0;
  private closedHorizon = 0;
  private searchId = 0;
  expansions = 0;
  searches = 0;

  constructor(
    private readonly layout: Layout,
    private readonly table: ReservationTable,
    readonly maxExpansions = 200_000,
  ) {
    this.capacity = 1024;
    this.nodeCell = new Int32Array(this.capacity);
    this.nodeTick = new Int32Array(this.capacity);
    this.nodeParent = new Int32Array(this.capacity);
    this.heapNode = new Int32Array(this.capacity);
    this.heapKey = new Float64Array(this.capacity);
    this.closed = new Int32Array(0);
    this.reachStamp = new Int32Array(layout.cellCount);
    this.reachQueue = new Int32Array(layout.cellCount);
  }

  /** True when `goal` is reachable from `start` without entering a cell another robot rests on since before `tick`. */
  private reachable(start: number, goal: number, tick: number, robot: number): boolean {
    const { table } = this;
    const neighbors = this.layout.neighbors;
    const stamp = this.reachStamp;
    const queue = this.reachQueue;
    const id = ++this.reachId;
    let head = 0;
    let tail = 0;
    queue[tail++] = start;
    stamp[start] = id;
    while (head < tail) {
      const cell = queue[head++];
      if (cell === goal) return true;
      const base = cell * 4;
      for (let d = 0; d < 4; d++) {
        const n = neighbors[base + d];
        if (n < 0 || stamp[n] === id) continue;
        stamp[n] = id;
        const rester = table.endRobot[n];
        if (rester >= 0 && rester !== robot && table.endFrom[n] <= tick) continue;
        queue[tail++] = n;
      }
    }
    return false;
  }

  /**
   * Earliest path from (start, startTick) to the goal under the goal condition, as cells at
   * consecutive ticks starting with `start` at `startTick` and ending on arrival at the goal
   * (the hold is not included). Null when no path is found within the limits.
   */
  search(request: SearchRequest): Int32Array | null {
    const { layout, table } = this;
    const cells = layout.cellCount;
    const horizon = table.horizon;
    if (this.closedHorizon !== horizon) {
      this.closed = new Int32Array(horizon * cells);
      this.closedHorizon = horizon;
      this.searchId = 0;
    }
    const mask = horizon - 1;
    const id = ++this.searchId;
    this.searches++;
    const { robot, start, startTick, goal, heuristic, holdTicks, restForever } = request;
    if (heuristic[start] >= 0x3fffffff) return null;
    // A goal another robot rests on forever can never satisfy a rest; fail without searching.
    if (restForever && table.endRobot[goal] >= 0 && table.endRobot[goal] !== robot) return null;
    // Paths must stay inside the reservation ring; leave room for the hold at the goal.
    const lastTick = startTick + horizon - 2 - (restForever ? 0 : holdTicks);
    const neighbors = layout.neighbors;
    const closed = this.closed;
    this.heapSize = 0;
    // ready[k - startTick] = earliest tick >= k at which the goal condition holds, for k below
    // startTick + span; past the goal's last reservation the goal is ready at once.
    const lastReserved = table.lastTickOfCell[goal];
    const span = Math.max(0, Math.min(horizon, lastReserved - startTick + 2));
    if (this.ready.length < span + 1) this.ready = new Int32Array(2 * span + 2);
    const ready = this.ready;
    if (restForever) {
      let lastOther = -1;
      for (let t = lastReserved; t >= startTick; t--) {
        if (!table.isFree(goal, t, robot)) {
          lastOther = t;
          break;
        }
      }
      for (let k = 0; k < span; k++) ready[k] = Math.max(startTick + k, lastOther + 1);
    } else {
      // Walking back, `run` counts consecutive free ticks from k on (ticks past the span are free).
      let run = holdTicks + 1;
      let next = startTick + span;
      for (let k = span - 1; k >= 0; k--) {
        const t = startTick + k;
        run = table.isFree(goal, t, robot) ? run + 1 : 0;
        if (run >= holdTicks + 1) next = t;
        ready[k] = next;
      }
    }
    const heuristicAt = (cell: number, tick: number): number => {
      const distance = heuristic[cell];
      const k = tick + distance - startTick;
      return k < span ? ready[k] - tick : distance;
    };
    let nodes = 0;
    const push = (cell: number, tick: number, parent: number): void => {
      if (nodes >= this.capacity) this.grow();
      this.nodeCell[nodes] = cell;
      this.nodeTick[nodes] = tick;
      this.nodeParent[nodes] = parent;
      const g = tick - startTick;
      // f first, then deeper nodes first among equal f (fewer re-expansions).
      this.heapPush(nodes, (g + heuristicAt(cell, tick)) * 1048576 - g);
      nodes++;
    };
    // The goal cell is terminal: entering it starts handling (or the rest), so a path may
    // enter it only when the goal condition holds, and never passes through it earlier.
    const goalHolds = (tick: number): boolean =>
      restForever ? table.isFreeFrom(goal, tick, robot) : table.isFreeDuring(goal, tick, tick + holdTicks, robot);
    if (start === goal) return goalHolds(startTick) ? Int32Array.of(start) : null;
    if (!this.reachable(start, goal, startTick, robot)) {
      this.unreachableSkips++;
      return null;
    }
    push(start, startTick, -1);
    closed[(startTick & mask) * cells + start] = id;
    let expanded = 0;
    while (this.heapSize > 0) {
      const node = this.heapPop();
      const cell = this.nodeCell[node];
      const tick = this.nodeTick[node];
      if (cell === goal) {
        this.expansions += expanded;
        return this.trace(node, startTick);
      }
      if (++expanded > this.maxExpansions) break;
      const next = tick + 1;
      if (next > lastTick) continue;
      const layer = (next & mask) * cells;
      // Wait in place.
      if (closed[layer + cell] !== id && table.isFree(cell, next, robot)) {
        closed[layer + cell] = id;
        push(cell, next, node);
      }
      const base = cell * 4;
      for (let d = 0; d < 4; d++) {
        const n = neighbors[base + d];
        if (n < 0 || closed[layer + n] === id) continue;
        if (heuristic[n] >= 0x3fffffff) continue;
        if (!table.isFree(n, next, robot) || table.swaps(cell, n, tick, robot)) continue;
        if (n === goal && !goalHolds(next)) continue;
        closed[layer + n] = id;
        push(n, next, node);
      }
    }
    this.expansions += expanded;
    return null;
  }

  private trace(node: number, startTick: number): Int32Array {
    const length = this.nodeTick[node] - startTick + 1;
    const path = new Int32Array(length);
    let i = length - 1;
    let n = node;
    while (n >= 0) {
      path[i--] = this.nodeCell[n];
      n = this.nodeParent[n];
    }
    return path;
  }

  private grow(): void {
    const capacity = this.capacity * 2;
    const resize = <T extends Int32Array | Float64Array>(array: T, make: (n: number) => T): T => {
      const next = make(capacity);
      next.set(array);
      return next;
    };
    this.nodeCell = resize(this.nodeCell, (n) => new Int32Array(n));
    this.nodeTick = resize(this.nodeTick, (n) => new Int32Array(n));
    this.nodeParent = resize(this.nodeParent, (n) => new Int32Array(n));
    this.heapNode = resize(this.heapNode, (n) => new Int32Array(n));
    this.heapKey = resize(this.heapKey, (n) => new Float64Array(n));
    this.capacity = capacity;
  }

  private heapPush(node: number, key: number): void {
    let i = this.heapSize++;
    const nodesArray = this.heapNode;
    const keys = this.heapKey;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (keys[parent] <= key) break;
      nodesArray[i] = nodesArray[parent];
      keys[i] = keys[parent];
      i = parent;
    }
    nodesArray[i] = node;
    keys[i] = key;
  }

  private heapPop(): number {
    const nodesArray = this.heapNode;
    const keys = this.heapKey;
    const top = nodesArray[0];
    const size = --this.heapSize;
    if (size > 0) {
      const node = nodesArray[size];
      const key = keys[size];
      let i = 0;
      for (;;) {
        const left = 2 * i + 1;
        if (left >= size) break;
        const right = left + 1;
        const child = right < size && keys[right] < keys[left] ? right : left;
        if (keys[child] >= key) break;
        nodesArray[i] = nodesArray[child];
        keys[i] = keys[child];
        i = child;
      }
      nodesArray[i] = node;
      keys[i] = key;
    }
    return top;
  }
}
