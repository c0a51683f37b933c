/**
 * Earliest-arrival search for one robot against reserved paths: safe-interval path planning
 * (Phillips & Likhachev, "SIPP: Safe Interval Path Planning for Dynamic Environments", ICRA
 * 2011) over the reservation table's per-cell intervals, as the low level of prioritized
 * planning (Erdmann & Lozano-Perez 1987; Silver 2005, "Cooperative Pathfinding").
 *
 * A safe interval of a cell is a maximal run of ticks at which no other robot holds it. A
 * search state is (cell, safe interval) with the earliest tick the robot can be there; it
 * may wait anywhere inside the interval, so waiting costs no expansions. A move from
 * (c, [a, b]) reached at t to a neighbour's interval [a', b'] arrives at the earliest t' in
 * [max(t + 1, a'), min(b + 1, b')] whose step does not swap cells with another robot (vertex
 * and swap collisions as in Stern et al., SoCS 2019). With unit moves and waits this finds
 * the same earliest arrival as a space-time A* over (cell, tick) (the paper's optimality
 * result); among equal arrivals it may choose a different path. A state reached later at
 * an earlier tick is re-opened, so the time-dependent heuristic below stays exact.
 *
 * Goal conditions: `holdTicks >= 0` means the robot must be able to stay on the goal for
 * that many ticks after arriving (handling at a station); `restForever` means nobody else
 * may use the goal cell at any later tick (the end of a token-passing path). The goal cell
 * is terminal: entering it starts handling (or the rest), so a path enters it only when the
 * condition holds and never passes through it earlier. The condition turns the goal's safe
 * intervals into arrival windows ([a, b - hold], or the last, endless interval for a rest).
 *
 * Heuristic: h(cell, t) = ready(t + dist(cell)) - t, where dist is the exact grid distance (a
 * BFS table) and ready(k) the earliest tick >= k inside an arrival window: the goal-ready
 * heuristic, admissible and consistent because ready is non-decreasing, and it stops the
 * search from flooding while a busy station is still taken.
 *
 * Tie order: among states with equal f (equal earliest arrivals), fewer moves first, by
 * the bound moves so far + dist(cell) (a move changes it by 0 or +2, a wait not at all),
 * then the deeper state. Any tie order keeps the arrival optimal; this one makes a robot
 * that is early for a taken goal wait on its way, as fleets queue, instead of burning the
 * slack on a detour (the deeper-first order alone walks the slack off in loops: on the demo
 * hall under saturated demand that put 2.4-5.5 points of robot time into travel that was
 * waiting, and flow-batch at 200 robots delivered 4% more once robots waited). It is a
 * preference, not a guarantee: a state keeps its earliest arrival only, so a path with
 * fewer moves that reaches a state later is not kept.
 *
 * Fail-fast: a search first checks that the goal can be reached at all around the robots
 * that rest for good (a rest that began before the start tick never ends on its own). On
 * crowded floors most failed searches are of that kind, and the check costs far less than a
 * search spending its expansion budget. It labels the connected parts of the floor without
 * those resting robots' cells (one breadth-first pass, O(cells)) and keeps the labels while
 * the set of such rests stays the same (checked in O(robots), or O(1) when the table's rest
 * revision and the tick are unchanged). When the labels are stale the check is lazy: it runs
 * only once the search has spent `reachabilityAfter` + its distance + floor cells / 32
 * expansions (floor cells / 4 while no recent search ended unreachable), since a search
 * that succeeds quickly needs no proof that it can; but while more than a quarter of recent
 * searches ended unreachable (robots boxed in by resting ones), a breadth-first pass from
 * the start, stopping at the goal, runs first, as the old always-on check did. The check only ends searches that could not succeed, so it never
 * changes a result.
 *
 * Shortest layer first (`freeShortestPath`): when the goal can be entered at startTick +
 * dist, the search's first pops are the states one step closer and one tick later; a
 * depth-first walk over those states, in the heap's own order, reads the table directly
 * (no intervals copied, no heap) and returns the search's very path when one exists (on the
 * demo hall under saturated demand, 44% of token passing's searches at 40 robots, 26% at
 * 200). Otherwise the search runs as below, from scratch.
 *
 * Memory follows what a search touches: the safe intervals of a cell are read from the
 * table the first time the search reaches it (a stamp per cell marks them current) into a
 * pool that grows as needed; nothing is sized horizon x cells. Cost is bounded by
 * `maxExpansions`; a search that exceeds it, or would end later than `horizon - 2` ticks
 * after its start (less the hold), fails and returns null.
 *
 * Headings (forward-only robots that turn in place, `turnTicks` > 0, sim/headings.ts): a
 * state is (cell, heading, safe interval) with the interval's earliest tick kept per
 * heading (`intervalBest` indexed interval x 4 + heading). Successors are the move to the
 * neighbour ahead (the heading does not change) and a quarter turn either way, which keeps
 * the robot in its cell and interval for `turnTicks` ticks (it must fit in the interval:
 * the robot holds the cell while turning); a half turn is two quarter turns. Turning as
 * early as possible is never worse (the robot holds its cell either way), so the earliest
 * tick per state stays exact, as in SIPP. The heuristic adds a geometric lower bound on
 * the quarter turns still needed (sim/headings.ts, `turnsLowerBound`) x `turnTicks`: a
 * robot must face every direction in which the goal lies, each quarter turn changes the
 * heading by one, and a forward move never lowers that bound, so it stays admissible and
 * consistent. The goal is reached with any heading; the robot does not turn while it is
 * loaded or unloaded, so the next leg starts from the goal with the arrival heading
 * (`lastHeading`). Safe intervals stay per cell: the table, `touch` and the interval scan
 * in `generate` are unchanged. With `turnTicks` 0 there is one heading and the search is
 * the one without headings, expansion for expansion.
 *
 * Start: the robot stands on `start` from `startTick`; a robot still turning or held back
 * (`readyTick` > startTick) can act only from `readyTick`, and the start cell's interval
 * must last until then.
 *
 * Deadline (`deadline`: only an arrival before it is of use, as for token passing's swap
 * probe, which asks whether a robot reaches a pickup before the robot assigned to it): the
 * search stops with no path once the least key in the heap has f >= deadline. f never
 * decreases from a state to its successors (the heuristic is consistent and `ready` is
 * non-decreasing) and the goal's key is its arrival, so from then on every goal state the
 * search could still reach arrives at the deadline or later. Before that the pops are those
 * of the search without a deadline, one for one, so an earlier arrival is found with the
 * same path, and the expansion limit ends no search that it would not have ended. A probe
 * that cannot arrive in time then costs the states with f < deadline instead of every state
 * up to the earliest arrival (on the demo hall at 200 robots most probes are such).
 */
import type { Layout } from './layout.ts';
import { unreachable } from './distance-table.ts';
import { turnsLowerBound } from './headings.ts';
import { copyPath } from './path-slab.ts';
import { foreverTick, type ReservationTable } from './reservation-table.ts';

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
  /** The robot's heading at the start (forward-only robots; ignored when turning takes no time). Default 0. */
  startHeading?: number;
  /** First tick at which the robot can turn or move (after a turn or hold in progress). Default startTick. */
  readyTick?: number;
  /**
   * An arrival at or after this tick is of no use to the caller: the search then fails
   * (returns null, -1) as soon as it has proved that it cannot arrive earlier. An arrival
   * before it is found exactly as without a deadline, path for path. Default: none.
   */
  deadline?: number;
}

const never = foreverTick;
/**
 * Heap keys: f x 2^33 + min(moves bound, 2^13 - 1) x 2^20 - g, exact in a double while f <
 * 2^20 and g < 2^20 (ticks after the search's start; paths stay within the horizon). The
 * cap keeps f first whatever the bound: it only blurs the order among paths longer than
 * 8,191 moves.
 */
const fScale = 2 ** 33;
const gScale = 2 ** 20;
const movesCap = 2 ** 13 - 1;

/** The heap key of a state: f and g in ticks after the search's start, `bound` its moves bound. */
function heapKeyOf(f: number, bound: number, g: number): number {
  return f * fScale + (bound < movesCap ? bound : movesCap) * gScale - g;
}
/** Starting size of the node, heap and interval arrays (see `nodeCell`). */
const initialCapacity = 16;

export class SpaceTimeAStar {
  // Search nodes: a (cell, interval) reached at a tick, with its parent. The node and interval
  // arrays start small (`initialCapacity`) and double as needed: the first searches then grow
  // them while the code still runs unoptimized, so the growth paths have run (and have type
  // feedback) before the search loop is optimized, instead of deoptimizing it later.
  private nodeCell = new Int32Array(initialCapacity);
  private nodeInterval = new Int32Array(initialCapacity);
  private nodeTick = new Int32Array(initialCapacity);
  private nodeParent = new Int32Array(initialCapacity);
  private nodeHeading = new Uint8Array(initialCapacity);
  /** Moves from the start to the node (a wait or a turn is not one). */
  private nodeMoves = new Int32Array(initialCapacity);
  private nodes = 0;
  private heapNode = new Int32Array(initialCapacity);
  private heapKey = new Float64Array(initialCapacity);
  private heapSize = 0;
  // Safe intervals of the cells touched by this search: [lo, hi] and the earliest tick reached (per heading).
  private intervalLo = new Int32Array(initialCapacity);
  private intervalHi = new Int32Array(initialCapacity);
  private intervalBest: Int32Array;
  /** Headings per state: 4 for forward-only robots, 1 when turning takes no time. */
  private readonly headings: number;
  private intervalsUsed = 0;
  private readonly cellStamp: Int32Array;
  private readonly cellFirst: Int32Array;
  private readonly cellCount: Int32Array;
  // Arrival windows at the goal, in time order.
  private windowLo = new Int32Array(16);
  private windowHi = new Int32Array(16);
  private windows = 0;
  // Reachability labels: component per floor cell without the blocking rests (-1: blocked),
  // valid for the rest cell per robot in `labelRest` (-1: none blocking).
  private readonly label: Int32Array;
  private readonly labelQueue: Int32Array;
  private readonly labelRest: Int32Array;
  private labelsBuilt = false;
  /** The labels before a pass: -2 (unlabelled) on floor cells, -1 elsewhere. */
  private labelTemplate: Int32Array | null = null;
  private labelRestRevision = -1;
  private labelTick = -1;
  private labelCheckedExcept = -1;
  private labelBuiltRevision = -1;
  private labelBuiltTick = -1;
  private readonly passStamp: Int32Array;
  private passId = 0;
  /** Share of recent searches ended as unreachable (exponentially weighted, 1/16). */
  private unreachableRate = 0;
  private searchId = 0;
  // The current request, kept in fields so the hot loop needs no closures.
  private robot = 0;
  private startTick = 0;
  private goal = 0;
  private lastTick = 0;
  /** The table holds every path entry from startTick on (see the swap test in `generate`). */
  private pathsWritten = false;
  private heuristic: Int32Array = new Int32Array(0);
  /** The last path found by `find` (its first `length` cells; reused by the next search). */
  path = new Int32Array(256);
  /** Heading at the goal after the last successful search (the last move's, or the start heading). */
  lastHeading = 0;
  /** Try the walk over the shortest states before searching (same result either way; off only to test that). */
  freePathFirst = true;
  /** Searches answered by the walk over the shortest states (`freeShortestPath`), without the search. */
  freePaths = 0;
  // The walk's states (cell, parent), its untried states, and the cells it reached (stamped per walk).
  private walkCell = new Int32Array(256);
  private walkParent = new Int32Array(256);
  private walkPending = new Int32Array(256);
  private readonly walkStamp: Int32Array;
  private walkId = 0;
  /** Searches that the reachability pass ended. */
  unreachableSkips = 0;
  /** Searches ended by their deadline (no arrival before it). */
  deadlineStops = 0;
  /** Breadth-first labelling passes run for the reachability check. */
  reachabilityPasses = 0;
  expansions = 0;
  searches = 0;

  constructor(
    private readonly layout: Layout,
    private readonly table: ReservationTable,
    readonly maxExpansions = 200_000,
    /** Expansions after which a search first checks that its goal is reachable at all. */
    readonly reachabilityAfter = 16,
    /** Ticks of a quarter turn in place; 0: robots turn in no time and states carry no heading. */
    readonly turnTicks = 0,
  ) {
    this.headings = turnTicks > 0 ? 4 : 1;
    this.intervalBest = new Int32Array(initialCapacity * this.headings).fill(never);
    const cells = layout.cellCount;
    this.cellStamp = new Int32Array(cells);
    this.cellFirst = new Int32Array(cells);
    this.cellCount = new Int32Array(cells);
    this.label = new Int32Array(cells);
    this.labelQueue = new Int32Array(cells);
    this.passStamp = new Int32Array(cells);
    this.walkStamp = new Int32Array(cells);
    this.labelRest = new Int32Array(table.robots);
  }

  /**
   * Earliest path from (start, startTick) to the goal under the goal condition, as cells at
   * consecutive ticks starting with `start` at `startTick` and ending on arrival at the goal
   * (the hold is not included). Null when no path is found within the limits.
   */
  search(request: SearchRequest): Int32Array | null {
    const length = this.find(request);
    return length < 0 ? null : copyPath(this.path, length);
  }

  /**
   * The same search without allocating: returns the path's length (-1 when none is found)
   * and leaves the path in `path` (indexes 0 .. length - 1), valid until the next search.
   * Callers that copy the path into a larger one (a task's legs) use this.
   */
  find(request: SearchRequest): number {
    const table = this.table;
    this.searches++;
    const { robot, start, startTick, goal, heuristic, holdTicks, restForever } = request;
    const headings = this.headings;
    const startHeading = headings === 4 ? (request.startHeading ?? 0) : 0;
    const readyTick = Math.max(startTick, request.readyTick ?? startTick);
    const deadline = request.deadline ?? never;
    this.lastHeading = startHeading;
    if (heuristic[start] >= unreachable) return -1;
    // A goal another robot rests on forever can never satisfy a rest; fail without searching.
    if (restForever && table.endRobot[goal] >= 0 && table.endRobot[goal] !== robot) return -1;
    if (start === goal) {
      if (startTick >= deadline) return this.deadlineEnd(0);
      const holds = restForever ? table.isFreeFrom(goal, startTick, robot) : table.isFreeDuring(goal, startTick, startTick + holdTicks, robot);
      if (!holds) return -1;
      this.path[0] = start;
      return 1;
    }
    this.robot = robot;
    this.startTick = startTick;
    this.goal = goal;
    this.heuristic = heuristic;
    // Paths stay within the horizon; leave room for the hold at the goal.
    this.lastTick = startTick + table.horizon - 2 - (restForever ? 0 : holdTicks);
    this.pathsWritten = startTick >= table.writtenSince;
    if (++this.searchId === 0x7fffffff) {
      this.cellStamp.fill(0);
      this.searchId = 1;
    }
    this.nodes = 0;
    this.heapSize = 0;
    // Slots past the used ones hold `never` (touch relies on it): reset what the last search used.
    this.intervalBest.fill(never, 0, this.intervalsUsed * headings);
    this.intervalsUsed = 0;
    if (!this.goalWindows(goal, startTick + 1, holdTicks, restForever)) return -1;
    if (this.freePathFirst && headings === 1 && readyTick === startTick) {
      // The walk's path arrives at startTick + dist, the search's own answer when it finds one.
      if (startTick + heuristic[start] >= deadline) return this.deadlineEnd(0);
      const free = this.freeShortestPath(start);
      if (free >= 0) {
        // As the search below would have done on passing the reachability pre-check.
        this.unreachableRate *= 15 / 16;
        this.freePaths++;
        return free;
      }
    }
    // With usable labels the reachability check is free: do it now. Otherwise, while many
    // recent searches were unreachable (a crowded floor, robots boxed in by resting ones), a
    // breadth-first pass from the start settles it at once, as cheap as the boxed-in region
    // is small; on an open floor, (re)label only once the search drags on.
    let checked = false;
    if (this.labelsCurrent(startTick, start)) {
      if (!this.reachable(start, goal)) return this.unreachableEnd();
    } else if (this.unreachableRate > 0.25) {
      checked = true;
      if (!this.reachableByPass(start, goal, startTick)) return this.unreachableEnd();
    }
    // Decays toward the share of searches ended as unreachable (set again in unreachableEnd).
    this.unreachableRate *= 15 / 16;

    // The start state: the robot stands on `start` at startTick whatever the table says (it
    // is there), and may stay while the cell stays free.
    const first = this.touch(start);
    let startInterval = first;
    if (this.cellCount[start] === 0 || this.intervalLo[first] !== startTick + 1) {
      // Not free at startTick + 1: the start interval is the single tick startTick.
      startInterval = this.prependInterval(start, startTick, startTick);
    } else {
      this.intervalLo[first] = startTick;
    }
    // A robot still turning or held acts only from readyTick, on its start cell until then.
    if (readyTick > this.intervalHi[startInterval]) return -1;
    this.intervalBest[startInterval * headings + startHeading] = readyTick;
    this.push(start, startInterval, startHeading, readyTick, -1);

    const neighbors = this.layout.neighbors;
    let expanded = 0;
    // Keys are (f - startTick) x 2^33 + bound x 2^20 - g with bound < 2^13 and 0 <= g < 2^20 (`fScale`): a key above this means f >= deadline.
    const stopKey = deadline >= never ? Infinity : (deadline - startTick) * fScale - gScale;
    // A search on an open floor expands about as many states as its distance; past that, it
    // pays for the check once it has spent about what a labelling costs (about one expansion
    // per 32 floor cells), so neither a doomed search nor a needless check costs much more
    // than the other (the ski-rental rule). While no recent search was unreachable (the rate
    // under 1/64), it waits 8 times as long (one expansion per 4 floor cells): a doomed search
    // then costs a few labellings more, where a check that finds nothing costs one labelling
    // each time (on the demo hall, 3,035 such checks in the 40-robot row's 8 h, none of which
    // ended a search, and 4% of its instructions).
    const patience = this.unreachableRate < 1 / 64 ? this.layout.floorCells.length >> 2 : this.layout.floorCells.length >> 5;
    const lazyAfter = this.reachabilityAfter + heuristic[start] + patience;
    if (headings === 1) return this.searchWithoutHeadings(start, stopKey, lazyAfter, checked);
    while (this.heapSize > 0) {
      if (this.heapKey[0] > stopKey) return this.deadlineEnd(expanded);
      const node = this.heapPop();
      const cell = this.nodeCell[node];
      const tick = this.nodeTick[node];
      if (cell === goal) {
        this.expansions += expanded;
        this.lastHeading = this.nodeHeading[node];
        return this.trace(node);
      }
      const interval = this.nodeInterval[node];
      const heading = this.nodeHeading[node];
      // A later copy of a state already reached earlier: nothing new to expand.
      if (tick > this.intervalBest[interval * headings + heading]) continue;
      if (++expanded > this.maxExpansions) break;
      if (!checked && expanded > lazyAfter) {
        checked = true;
        if (this.provenUnreachable(start)) break;
      }
      const leaveBy = this.intervalHi[interval] + 1;
      const base = cell * 4;
      // Forward-only: the cell ahead, or a quarter turn either way within the cell's interval.
      const ahead = neighbors[base + heading];
      if (ahead >= 0 && heuristic[ahead] < unreachable) this.generate(node, cell, tick, leaveBy, ahead, heading);
      const turned = tick + this.turnTicks;
      if (turned <= this.intervalHi[interval]) {
        for (let side = 1; side < 4; side += 2) {
          const next = (heading + side) & 3;
          const best = interval * 4 + next;
          if (turned >= this.intervalBest[best]) continue;
          this.intervalBest[best] = turned;
          this.push(cell, interval, next, turned, node);
        }
      }
    }
    this.expansions += expanded;
    return -1;
  }

  /**
   * The loop of `find` for states without a heading (turnTicks 0, the common case), kept in
   * its own, smaller function so that it is compiled early and as a whole: `push`, `ready`,
   * the heap's push and pop and `generate` (but at the goal) written out, with the same
   * successors in the same order and the same heap operations, so its pops, expansions and
   * paths are those of the general loop, state for state.
   */
  private searchWithoutHeadings(start: number, stopKey: number, lazyAfter: number, checked: boolean): number {
    const table = this.table;
    const neighbors = this.layout.neighbors;
    const heuristic = this.heuristic;
    const goal = this.goal;
    const robot = this.robot;
    const startTick = this.startTick;
    const lastTick = this.lastTick;
    const pathsWritten = this.pathsWritten;
    const searchId = this.searchId;
    const maxExpansions = this.maxExpansions;
    const cellStamp = this.cellStamp;
    const cellFirst = this.cellFirst;
    const cellCount = this.cellCount;
    // The goal's arrival windows stay as goalWindows left them; `ready` with one window inline.
    const oneWindow = this.windows === 1;
    const onlyLo = this.windowLo[0];
    const onlyHi = this.windowHi[0];
    let expanded = 0;
    while (this.heapSize > 0) {
      let heapNode = this.heapNode;
      let heapKey = this.heapKey;
      if (heapKey[0] > stopKey) return this.deadlineEnd(expanded);
      // heapPop, written out.
      const node = heapNode[0];
      const size = --this.heapSize;
      if (size > 0) {
        const last = heapNode[size];
        const key = heapKey[size];
        let i = 0;
        for (;;) {
          const left = 2 * i + 1;
          if (left >= size) break;
          const right = left + 1;
          const child = right < size && heapKey[right] < heapKey[left] ? right : left;
          if (heapKey[child] >= key) break;
          heapNode[i] = heapNode[child];
          heapKey[i] = heapKey[child];
          i = child;
        }
        heapNode[i] = last;
        heapKey[i] = key;
      }
      const cell = this.nodeCell[node];
      const tick = this.nodeTick[node];
      if (cell === goal) {
        this.expansions += expanded;
        this.lastHeading = 0;
        return this.trace(node);
      }
      const interval = this.nodeInterval[node];
      // A later copy of a state already reached earlier: nothing new to expand.
      if (tick > this.intervalBest[interval]) continue;
      if (++expanded > maxExpansions) break;
      if (!checked && expanded > lazyAfter) {
        checked = true;
        if (this.provenUnreachable(start)) break;
      }
      const leaveBy = this.intervalHi[interval] + 1;
      const latest = leaveBy < lastTick ? leaveBy : lastTick;
      const base = cell * 4;
      const childMoves = this.nodeMoves[node] + 1;
      for (let d = 0; d < 4; d++) {
        const n = neighbors[base + d];
        if (n < 0) continue;
        const distance = heuristic[n];
        if (distance >= unreachable) continue;
        if (n === goal) {
          this.generate(node, cell, tick, leaveBy, n, 0);
          continue;
        }
        const first = cellStamp[n] === searchId ? cellFirst[n] : this.touch(n);
        // Read after touch, which may grow the pool.
        const lo = this.intervalLo;
        const hi = this.intervalHi;
        const best = this.intervalBest;
        for (let i = first, end = first + cellCount[n]; i < end; i++) {
          const from = lo[i];
          if (from > latest) break;
          const until = hi[i];
          if (until <= tick) continue;
          let arrival = tick + 1 > from ? tick + 1 : from;
          // The swap test of `generate` (see there).
          if (arrival === from && (arrival === leaveBy || !pathsWritten) && table.swaps(cell, n, arrival - 1, robot)) arrival++;
          if (arrival > (latest < until ? latest : until) || arrival >= best[i]) continue;
          best[i] = arrival;
          // push(n, i, 0, arrival, node), written out (the heading stays 0: no search of this
          // instance has one).
          if (this.nodes === this.nodeCell.length) this.growNodes();
          const child = this.nodes++;
          this.nodeCell[child] = n;
          this.nodeInterval[child] = i;
          this.nodeTick[child] = arrival;
          this.nodeParent[child] = node;
          this.nodeMoves[child] = childMoves;
          const k = arrival + distance;
          const ready = oneWindow ? (onlyHi < k ? never : k > onlyLo ? k : onlyLo) : this.ready(k);
          if (ready > lastTick) continue; // the goal cannot be reached in time from here
          const key = heapKeyOf(ready - startTick, childMoves + distance, arrival - startTick);
          // heapPush, written out.
          heapNode = this.heapNode;
          heapKey = this.heapKey;
          let h = this.heapSize++;
          while (h > 0) {
            const parent = (h - 1) >> 1;
            if (heapKey[parent] <= key) break;
            heapNode[h] = heapNode[parent];
            heapKey[h] = heapKey[parent];
            h = parent;
          }
          heapNode[h] = child;
          heapKey[h] = key;
        }
      }
    }
    this.expansions += expanded;
    return -1;
  }

  /**
   * The lazy reachability check of a search that drags on: (re)labels when the labels are
   * not those of this table and tick, and true (recording the skip) when they prove the goal
   * unreachable from `start`.
   */
  private provenUnreachable(start: number): boolean {
    const startTick = this.startTick;
    // Labels built for this very table and tick are as precise as they get.
    if (this.labelBuiltRevision !== this.table.restRevision || this.labelBuiltTick !== startTick) {
      if (this.labelsExact(startTick)) this.markLabelsBuilt(startTick);
      else this.buildLabels(startTick);
    }
    if (this.labelsCurrent(startTick, start) && !this.reachable(start, this.goal)) {
      this.unreachableRate += 1 / 16;
      this.unreachableSkips++;
      return true;
    }
    return false;
  }

  /**
   * Successors of `node` (at `cell` from `tick`, which it must leave by `leaveBy`) in the safe
   * intervals of neighbour `n`, or in the goal's arrival windows when n is the goal.
   */
  private generate(node: number, cell: number, tick: number, leaveBy: number, n: number, heading: number): void {
    const isGoal = n === this.goal;
    let lo: Int32Array;
    let hi: Int32Array;
    let first: number;
    let count: number;
    if (isGoal) {
      lo = this.windowLo;
      hi = this.windowHi;
      first = 0;
      count = this.windows;
    } else {
      first = this.touch(n);
      count = this.cellCount[n];
      lo = this.intervalLo;
      hi = this.intervalHi;
    }
    const latest = Math.min(leaveBy, this.lastTick);
    for (let i = first; i < first + count; i++) {
      if (lo[i] > latest) break;
      if (hi[i] <= tick) continue;
      let arrival = Math.max(tick + 1, lo[i]);
      const end = Math.min(latest, hi[i]);
      // A swap needs another robot on n at arrival - 1, so only an arrival at the very start
      // of the interval can be one; one tick later n was already free. It also needs that
      // robot on `cell` at arrival, so `cell` is not free then: our interval has ended, and
      // the arrival is the tick we must leave by (the table holds every live path from
      // `writtenSince` on, and an earlier start than that reads positions it does not hold).
      // On the demo hall that spares about 70% of the swap tests, and none of those found one.
      if (arrival === lo[i] && (arrival === leaveBy || !this.pathsWritten) && this.table.swaps(cell, n, arrival - 1, this.robot)) arrival++;
      if (arrival > end) continue;
      if (isGoal) {
        this.push(n, -1, heading, arrival, node);
        // Later windows only arrive later.
        return;
      }
      const best = i * this.headings + heading;
      if (arrival >= this.intervalBest[best]) continue;
      this.intervalBest[best] = arrival;
      this.push(n, i, heading, arrival, node);
    }
  }

  /**
   * The path the search below returns when it finds one as short as the distance table
   * allows (arrival at startTick + dist), found without the search's intervals and heap: a
   * depth-first walk over the states one step closer to the goal and one tick later (a
   * neighbour free at the next tick, no swap; the goal inside an arrival window), trying
   * neighbours in neighbour order and going back to the deepest state left untried. Null
   * (then the search runs as always) when there is no such path, when the walk would need
   * more than 4 x dist + 64 expansions, or when a state has three or more such successors.
   *
   * Why this is the search's own answer, not just an equally good one: when the goal is
   * ready at startTick + dist, f = dist is the least key, and the states with f = dist are
   * exactly those one step closer and one tick later than a state with f = dist (h drops by
   * at most 1 per move, the arrival grows by at least 1; every other state has a larger
   * key). A cell with distance h can only be reached at startTick + dist - h or later, so
   * each such cell is one state, pushed once (the later pushes find it reached). These
   * states never wait, so they share the moves bound dist, and among them the heap key
   * prefers the deeper state; the children of one expansion are
   * deeper than everything in the heap, and of two with the same key the first pushed
   * (lower neighbour index) reaches the root first (a push moves up past strictly larger
   * keys only), while the other stays the deepest untried state until all below the first
   * are done. So the search's pops are this walk's, up to the goal, whose key is then the
   * least. With three such children the heap's order among the later two depends on its
   * layout, hence the bail-out. The expansion limit cannot intervene (the walk gives up
   * before it), and the lazy reachability check only ends searches without a path. The
   * vertex test (`isFree` at t + 1) and the swap test are the ones `generate` applies
   * through the safe intervals; the table is read directly, so no interval is copied.
   */
  private freeShortestPath(start: number): number {
    const heuristic = this.heuristic;
    const dist = heuristic[start];
    const startTick = this.startTick;
    const arrival = startTick + dist;
    if (arrival > this.lastTick || this.ready(arrival) !== arrival) return -1;
    const limit = Math.min(4 * dist + 64, this.maxExpansions);
    // Every expansion adds at most two states.
    if (this.walkCell.length < 2 * limit + 2) {
      this.walkCell = new Int32Array(2 * (2 * limit + 2));
      this.walkParent = new Int32Array(2 * (2 * limit + 2));
      this.walkPending = new Int32Array(2 * (2 * limit + 2));
    }
    const cellOf = this.walkCell;
    const parentOf = this.walkParent;
    const pending = this.walkPending;
    const reached = this.walkStamp;
    if (++this.walkId === 0x7fffffff) {
      reached.fill(0);
      this.walkId = 1;
    }
    const id = this.walkId;
    const table = this.table;
    const neighbors = this.layout.neighbors;
    const goal = this.goal;
    const robot = this.robot;
    cellOf[0] = start;
    parentOf[0] = -1;
    reached[start] = id;
    let states = 1;
    let pendingCount = 0;
    let current = 0;
    for (let expanded = 1; expanded <= limit; expanded++) {
      const cell = cellOf[current];
      const closer = heuristic[cell] - 1;
      const tick = arrival - heuristic[cell];
      const base = cell * 4;
      let first = -1;
      let second = -1;
      for (let d = 0; d < 4; d++) {
        const n = neighbors[base + d];
        if (n < 0 || heuristic[n] !== closer || reached[n] === id) continue;
        // The goal: the arrival window holds (ready(arrival) === arrival, checked above); other cells: free at tick + 1.
        if (!table.mayStep(cell, n, tick, robot, n === goal)) continue;
        if (n === goal) return this.walkTrace(current, dist);
        if (first < 0) first = n;
        else if (second < 0) second = n;
        else return -1;
      }
      if (first >= 0) {
        reached[first] = id;
        if (second >= 0) {
          reached[second] = id;
          cellOf[states] = second;
          parentOf[states] = current;
          pending[pendingCount++] = states++;
        }
        cellOf[states] = first;
        parentOf[states] = current;
        current = states++;
      } else {
        if (pendingCount === 0) return -1;
        current = pending[--pendingCount];
      }
    }
    return -1;
  }

  /** The walk's path into `path`: from the start down the parents of `last` (at distance 1), then the goal; returns its length. */
  private walkTrace(last: number, dist: number): number {
    const path = this.pathOfLength(dist + 1);
    path[dist] = this.goal;
    for (let s = last; s >= 0; s = this.walkParent[s]) {
      const cell = this.walkCell[s];
      path[dist - this.heuristic[cell]] = cell;
    }
    return dist + 1;
  }

  /** Arrival windows at the goal from tick `from` on; false when there is none. */
  private goalWindows(goal: number, from: number, holdTicks: number, restForever: boolean): boolean {
    const table = this.table;
    const capacity = table.listLength[goal] + 1;
    if (this.windowLo.length < capacity) {
      this.windowLo = new Int32Array(2 * capacity);
      this.windowHi = new Int32Array(2 * capacity);
    }
    const count = table.safeIntervals(goal, from, this.robot, this.windowLo, this.windowHi, 0);
    let windows = 0;
    for (let i = 0; i < count; i++) {
      const lo = this.windowLo[i];
      const hi = this.windowHi[i];
      if (restForever) {
        if (hi !== never) continue;
      } else if (hi !== never) {
        if (hi - holdTicks < lo) continue;
        this.windowHi[windows] = hi - holdTicks;
        this.windowLo[windows++] = lo;
        continue;
      }
      this.windowLo[windows] = lo;
      this.windowHi[windows++] = never;
    }
    this.windows = windows;
    return windows > 0;
  }

  /** Earliest tick >= k inside an arrival window, or `never`. */
  private ready(k: number): number {
    const lo = this.windowLo;
    const hi = this.windowHi;
    // Most goals have one window (free from some tick on): no search needed.
    if (this.windows === 1) return hi[0] < k ? never : Math.max(k, lo[0]);
    let a = 0;
    let b = this.windows;
    while (a < b) {
      const m = (a + b) >> 1;
      if (hi[m] < k) a = m + 1;
      else b = m;
    }
    return a < this.windows ? Math.max(k, lo[a]) : never;
  }

  /** Index of the first safe interval of `cell` for this search, reading them from the table on first touch. */
  private touch(cell: number): number {
    if (this.cellStamp[cell] === this.searchId) return this.cellFirst[cell];
    const table = this.table;
    const needed = this.intervalsUsed + table.listLength[cell] + 2;
    if (needed > this.intervalLo.length) this.growIntervals(needed);
    const at = this.intervalsUsed;
    const count = table.safeIntervals(cell, this.startTick + 1, this.robot, this.intervalLo, this.intervalHi, at);
    // Their earliest ticks are `never` already: every slot past the used ones is (`find` resets them).
    this.intervalsUsed += count;
    this.cellStamp[cell] = this.searchId;
    this.cellFirst[cell] = at;
    this.cellCount[cell] = count;
    return at;
  }

  /** Adds [lo, hi] before the intervals of `cell` (the start cell's single-tick interval). */
  private prependInterval(cell: number, lo: number, hi: number): number {
    const at = this.cellFirst[cell];
    const count = this.cellCount[cell];
    if (this.intervalsUsed + 1 > this.intervalLo.length) this.growIntervals(this.intervalsUsed + 1);
    // The start cell is the first touched, so its intervals are the last in the pool.
    const headings = this.headings;
    this.intervalLo.copyWithin(at + 1, at, at + count);
    this.intervalHi.copyWithin(at + 1, at, at + count);
    this.intervalBest.copyWithin((at + 1) * headings, at * headings, (at + count) * headings);
    this.intervalLo[at] = lo;
    this.intervalHi[at] = hi;
    this.intervalBest.fill(never, at * headings, (at + 1) * headings);
    this.cellCount[cell] = count + 1;
    this.intervalsUsed++;
    return at;
  }

  private push(cell: number, interval: number, heading: number, tick: number, parent: number): void {
    if (this.nodes === this.nodeCell.length) this.growNodes();
    const node = this.nodes++;
    this.nodeCell[node] = cell;
    this.nodeInterval[node] = interval;
    this.nodeTick[node] = tick;
    this.nodeParent[node] = parent;
    this.nodeHeading[node] = heading;
    // A turn keeps the robot on its cell: only a step to another cell is a move.
    const moves = parent < 0 ? 0 : this.nodeMoves[parent] + (this.nodeCell[parent] === cell ? 0 : 1);
    this.nodeMoves[node] = moves;
    let distance = this.heuristic[cell];
    const bound = moves + distance;
    if (this.headings === 4) distance += this.turnTicks * turnsLowerBound(this.layout.width, cell, heading, this.goal);
    const arrival = this.ready(tick + distance);
    if (arrival > this.lastTick) return; // the goal cannot be reached in time from here
    const g = tick - this.startTick;
    // f = arrival - startTick first; among equal f, fewer moves (a lower bound: moves so far
    // plus the distance left), then deeper nodes first (fewer expansions).
    this.heapPush(node, heapKeyOf(arrival - this.startTick, bound, g));
  }

  /** True when `goal` is reachable from `start` without entering a cell another robot rests on since before `tick`. */
  private reachableByPass(start: number, goal: number, tick: number): boolean {
    const table = this.table;
    const neighbors = this.layout.neighbors;
    const stamp = this.passStamp;
    const queue = this.labelQueue;
    const id = ++this.passId;
    this.reachabilityPasses++;
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
        if (rester >= 0 && rester !== this.robot && table.endFrom[n] <= tick) continue;
        queue[tail++] = n;
      }
    }
    return false;
  }

  /** Ends a search that cannot arrive before its deadline. */
  private deadlineEnd(expanded: number): number {
    this.expansions += expanded;
    this.deadlineStops++;
    return -1;
  }

  /** Ends a search proven unreachable before it began. */
  private unreachableEnd(): number {
    this.unreachableSkips++;
    this.unreachableRate = (this.unreachableRate * 15) / 16 + 1 / 16;
    return -1;
  }

  /** The cell robot r rests on since before `tick` (blocking everyone else), or -1. */
  private blockingRest(robot: number, tick: number): number {
    const table = this.table;
    const cell = table.pathEnd[robot];
    return cell >= 0 && table.endRobot[cell] === robot && table.endFrom[cell] <= tick ? cell : -1;
  }

  /**
   * True when the labels can prove unreachability for this search: every cell they treat as
   * blocked is still blocked at `tick` for the searching robot (a robot other than it rests
   * there since before `tick`), except the robot's own start, where it stands. Blocking
   * fewer cells than the truth only joins parts of the floor, so "different parts" stays a
   * proof; the labels just prove less until they are rebuilt.
   */
  private labelsCurrent(tick: number, start: number): boolean {
    if (!this.labelsBuilt) return false;
    const table = this.table;
    const self = this.robot;
    const own = this.labelRest[self];
    if (own >= 0 && own !== start) return false;
    if (table.restRevision === this.labelRestRevision && tick === this.labelTick) {
      // Same table as at the last check, which left out its own robot's entry.
      const other = this.labelCheckedExcept;
      return other === self || other < 0 || this.stillBlocking(other, tick);
    }
    for (let r = 0; r < table.robots; r++) if (r !== self && !this.stillBlocking(r, tick)) return false;
    this.labelRestRevision = table.restRevision;
    this.labelTick = tick;
    this.labelCheckedExcept = self;
    return true;
  }

  /** True when robot r's cell in the labels (if any) is still its blocking rest at `tick`. */
  private stillBlocking(robot: number, tick: number): boolean {
    const cell = this.labelRest[robot];
    return cell < 0 || cell === this.blockingRest(robot, tick);
  }

  /** Labels the connected parts of the floor without the cells of robots resting since before `tick`. */
  private buildLabels(tick: number): void {
    const table = this.table;
    const label = this.label;
    const passable = this.layout.passable;
    const open = this.layout.openDirections;
    const width = this.layout.width;
    const queue = this.labelQueue;
    this.reachabilityPasses++;
    const unlabelled = -2;
    if (this.labelTemplate === null) {
      this.labelTemplate = new Int32Array(label.length).fill(-1);
      for (let c = 0; c < label.length; c++) if (passable[c]) this.labelTemplate[c] = unlabelled;
    }
    label.set(this.labelTemplate);
    for (let r = 0; r < table.robots; r++) {
      // The searching robot's own rest never blocks it.
      const cell = r === this.robot ? -1 : this.blockingRest(r, tick);
      this.labelRest[r] = cell;
      if (cell >= 0) label[cell] = -1;
    }
    let parts = 0;
    for (let c = 0; c < label.length; c++) {
      if (label[c] !== unlabelled) continue;
      let head = 0;
      let tail = 0;
      queue[tail++] = c;
      label[c] = parts;
      while (head < tail) {
        const cell = queue[head++];
        // Open sides as one byte (Layout.openDirections), in the neighbour table's order.
        const sides = open[cell];
        if (sides & 1 && label[cell - width] === unlabelled) {
          label[cell - width] = parts;
          queue[tail++] = cell - width;
        }
        if (sides & 2 && label[cell + 1] === unlabelled) {
          label[cell + 1] = parts;
          queue[tail++] = cell + 1;
        }
        if (sides & 4 && label[cell + width] === unlabelled) {
          label[cell + width] = parts;
          queue[tail++] = cell + width;
        }
        if (sides & 8 && label[cell - 1] === unlabelled) {
          label[cell - 1] = parts;
          queue[tail++] = cell - 1;
        }
      }
      parts++;
    }
    this.markLabelsBuilt(tick);
  }

  /**
   * True when labels built now for this robot would block exactly the cells they block
   * already (the same resting robots on the same cells): then they are the labels a new
   * pass would give, without the O(cells) pass.
   */
  private labelsExact(tick: number): boolean {
    if (!this.labelsBuilt) return false;
    const self = this.robot;
    const rests = this.labelRest;
    for (let r = 0; r < this.table.robots; r++) if (rests[r] !== (r === self ? -1 : this.blockingRest(r, tick))) return false;
    return true;
  }

  /** Records that the labels are those of the table's current revision at `tick`. */
  private markLabelsBuilt(tick: number): void {
    const table = this.table;
    this.labelsBuilt = true;
    this.labelBuiltRevision = table.restRevision;
    this.labelBuiltTick = tick;
    this.labelRestRevision = table.restRevision;
    this.labelTick = tick;
    this.labelCheckedExcept = -1;
  }

  /**
   * False when the labels prove that `goal` cannot be reached from `start` without entering
   * a cell another robot rests on since before the start tick. The start cell itself may be
   * labelled blocked (the robot's own earlier rest): then its neighbours decide.
   */
  private reachable(start: number, goal: number): boolean {
    const label = this.label;
    const target = label[goal];
    if (target < 0) return this.labelRest[this.robot] === goal;
    if (label[start] >= 0) return label[start] === target;
    const neighbors = this.layout.neighbors;
    for (let d = 0; d < 4; d++) {
      const n = neighbors[start * 4 + d];
      if (n >= 0 && label[n] === target) return true;
    }
    return false;
  }

  /** The path to `node` into `path`, as cells at consecutive ticks from startTick (waits filled in); returns its length. */
  private trace(node: number): number {
    const startTick = this.startTick;
    const length = this.nodeTick[node] - startTick + 1;
    const path = this.pathOfLength(length);
    const nodeCell = this.nodeCell;
    const nodeTick = this.nodeTick;
    const nodeParent = this.nodeParent;
    let end = length;
    for (let n = node; n >= 0; n = nodeParent[n]) {
      // The root may start after startTick (a robot still turning or held): it stood there from startTick.
      const from = nodeParent[n] < 0 ? 0 : nodeTick[n] - startTick;
      // A loop, not fill(): most runs are one or two ticks, and fill's call costs more than that.
      const cell = nodeCell[n];
      for (let i = from; i < end; i++) path[i] = cell;
      end = from;
    }
    return length;
  }

  /** The path buffer, grown to hold `length` cells. */
  private pathOfLength(length: number): Int32Array {
    if (this.path.length < length) this.path = new Int32Array(Math.max(length, 2 * this.path.length));
    return this.path;
  }

  /** Bytes held in typed arrays (for benchmarks). */
  memoryBytes(): number {
    const arrays = [
      this.nodeCell, this.nodeInterval, this.nodeTick, this.nodeParent, this.nodeHeading, this.nodeMoves, this.heapNode, this.heapKey,
      this.intervalLo, this.intervalHi, this.intervalBest, this.cellStamp, this.cellFirst, this.cellCount,
      this.windowLo, this.windowHi, this.label, this.labelQueue, this.labelRest, this.passStamp,
      this.walkCell, this.walkParent, this.walkPending, this.walkStamp, this.path,
    ];
    let bytes = 0;
    for (const a of arrays) bytes += a.byteLength;
    return bytes;
  }

  private growIntervals(needed: number): void {
    let capacity = this.intervalLo.length;
    while (capacity < needed) capacity *= 2;
    this.intervalLo = resized(this.intervalLo, capacity);
    this.intervalHi = resized(this.intervalHi, capacity);
    const best = new Int32Array(capacity * this.headings).fill(never);
    best.set(this.intervalBest);
    this.intervalBest = best;
  }

  private growNodes(): void {
    const capacity = 2 * this.nodeCell.length;
    this.nodeCell = resized(this.nodeCell, capacity);
    this.nodeInterval = resized(this.nodeInterval, capacity);
    this.nodeTick = resized(this.nodeTick, capacity);
    this.nodeParent = resized(this.nodeParent, capacity);
    const headings = new Uint8Array(capacity);
    headings.set(this.nodeHeading);
    this.nodeHeading = headings;
    this.nodeMoves = resized(this.nodeMoves, capacity);
    this.heapNode = resized(this.heapNode, capacity);
    const keys = new Float64Array(capacity);
    keys.set(this.heapKey);
    this.heapKey = keys;
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

function resized(array: Int32Array, capacity: number): Int32Array<ArrayBuffer> {
  const next = new Int32Array(capacity);
  next.set(array);
  return next;
}
