/**
 * Task dispatch for the PIBT policy: which idle robot takes which open task.
 *
 * Few open tasks (idle robots at least as many): each open task, oldest first, takes the
 * nearest idle robot (grid distance to its pickup; ties: lower robot index). Every task is
 * served at once; the order only decides who travels.
 *
 * A backlog (more open tasks than idle robots): the idle robots are matched to the oldest
 * open tasks of pickup stations by the cost
 *   distance(robot, pickup) + queueWeight * (handling seconds already queued at the pickup)
 *                           - ageWeight * (seconds the station's oldest open task has waited),
 * in cells, greedily, cheapest pair first: each round the station whose nearest unclaimed
 * idle robot costs least takes that robot for its oldest task, and its cost is updated (one
 * more queued pickup, a younger head task). With one idle robot (the usual case in a running
 * fleet) that robot takes the station of lowest cost. The cost is the ageing cost of
 * flow-batch's epoch assignment (policies/flow-batch/epoch-assignment.ts; assignment after
 * Kuhn 1955 and Jonker & Volgenant 1987); the queue term (handling time of robots already
 * sent to the pickup and not yet loaded) is join-the-shortest-queue routing (common
 * practice); the greedy matching by increasing cost is the classic greedy heuristic for
 * weighted bipartite matching (Avis, "A survey of heuristics for the weighted matching
 * problem", Networks 13, 1983 (memory)). It stays O(idle robots x stations) per round with
 * a few idle robots and O(stations x (idle robots + largest distance)) for sorting plus
 * O(idle robots x stations) for the rounds with many, so 10,000 robots leaving parking cost
 * about a million steps once.
 *
 * Why cheapest pair first, not robots in index order. A one-robot-at-a-time greedy in index
 * order lets the first robots take the stations and leaves the later ones what is left: at
 * the cold start of 10,000 robots on a 123-induct hall (robots numbered row by row through
 * the parking block) it sent 51 robots to the northern inducts and 112 to the southern ones,
 * 506 cells away on average; cheapest pair first sends 58 to 107 (the demand's draw of the
 * oldest tasks) from 440 cells away, and the hall delivers 2,511 tasks in its first 15
 * minutes instead of 1,550.
 *
 * Why not the nearest task. Under a backlog every station always has work, so "nearest"
 * sends every robot to the few pickups nearest the drops: on the demo hall two of eight
 * induct points were never served and robots queued at one pickup while the others idled.
 * With the ageing credit no station starves: a station nobody serves keeps an ageing head
 * task whose credit grows without bound, so after (largest distance in the hall + queue
 * term) / ageWeight seconds more than any other station's head it costs less for every robot.
 * In a sustained overload the heads of all stations therefore age at the same pace, which
 * forces each station's service rate to match its arrival rate: every station gets its fair
 * share of the deliveries (its share of the demand).
 *
 * Candidates: the open list is in release order; it is scanned from the oldest task until
 * every pickup station is found (at most `maxStations`, default 1,024) and at least as many
 * tasks as idle robots are collected (a station keeps at most one task per idle robot), so a
 * pass costs O(scanned tasks + robots + the matching above) (one pass over the robots sums
 * the queued handling) and never O(open tasks x robots) under a deep backlog. A station
 * whose collected tasks run out in a pass drops out of that pass only. Comparing fewer
 * stations than the hall has starves the rest at a cold start: a cap of 64 on the 123-induct
 * hall sent all 10,000 robots to 64 inducts (127 to 202 each) and the other 59 got none.
 * With few open tasks and many idle robots (more idle robots than open tasks) the tasks
 * choose through per-pickup orders of the idle robots by distance (a counting sort),
 * O(pickups x (robots + largest distance)) instead of O(tasks x robots).
 */
import type { DistanceTables } from '../../sim/distance-table.ts';
import { unreachable as unreachableImport } from '../../sim/distance-table.ts';
import { Phase, type World } from '../../sim/world.ts';

// Read once: imported bindings are getters under the TypeScript loader, and these are read
// per robot in the dispatch loops.
const unreachable = unreachableImport;
const phaseToPickup = Phase.ToPickup;
const phaseHandlingPickup = Phase.HandlingPickup;

/** Above this many (idle robots x open tasks) pairs, tasks choose by sorted buckets instead of scans. */
const bucketThreshold = 1 << 16;
/** Up to this many idle robots, the robot-side pass scans them per station instead of sorting. */
const smallPass = 16;

export interface DispatchOptions {
  /** Cells of cost credited per second a station's oldest open task has waited. */
  ageWeight: number;
  /** Cells of cost per second of pickup handling already queued at the station. */
  queueWeight: number;
  /** At most this many pickup stations (those with the oldest open tasks) are compared per pass. */
  maxStations: number;
}

export class Dispatcher {
  /** Per pickup cell: index into the candidate arrays of this pass, or -1. */
  private readonly slotOf: Int32Array;
  /** Per pickup cell: pickup handling ticks of tasks assigned there and not yet loaded. */
  private readonly queuedTicks: Float64Array;
  private readonly queuedCells: number[] = [];
  private readonly slotCell: number[] = [];
  private readonly slotTasks: number[][] = [];
  private readonly slotHead: number[] = [];
  private readonly slotTable: Int32Array[] = [];
  private readonly slotCredit: number[] = [];
  private readonly chosen: number[] = [];
  private readonly claimed: Uint8Array;
  /** Robot-side pass with many idle robots: per candidate station, the idle robots by distance. */
  private readonly orders: Int32Array[] = [];
  private readonly orderNext: number[] = [];
  private readonly pickupCount: number;

  constructor(
    private readonly world: World,
    private readonly distances: DistanceTables,
    private readonly tickSeconds: number,
    private readonly options: DispatchOptions,
  ) {
    this.slotOf = new Int32Array(world.layout.cellCount).fill(-1);
    this.queuedTicks = new Float64Array(world.layout.cellCount);
    this.claimed = new Uint8Array(world.robotCount);
    this.pickupCount = new Set(world.layout.pickups).size + new Set(world.layout.storage).size;
  }

  /** Assigns open tasks to idle robots (`idle` in ascending index order) through `give`. */
  dispatch(idle: number[], tick: number, give: (robot: number, task: number) => void): void {
    const open = this.world.openTasks;
    if (open.length === 0 || idle.length === 0) return;
    if (idle.length >= open.length) this.tasksChoose(idle, give);
    else this.robotsChoose(idle, tick, give);
  }

  private tasksChoose(idle: number[], give: (robot: number, task: number) => void): void {
    const chosen = this.chosen;
    chosen.length = 0;
    // Decide first, assign after: assigning edits the open list (and saturated demand refills it).
    if (idle.length * this.world.openTasks.length <= bucketThreshold) this.tasksChooseByScan(idle);
    else this.tasksChooseByBuckets(idle);
    for (let i = 0; i < chosen.length; i += 2) give(chosen[i], chosen[i + 1]);
  }

  /** Each open task, oldest first, scans the remaining idle robots for the nearest. */
  private tasksChooseByScan(idle: number[]): void {
    const world = this.world;
    const open = world.openTasks;
    const pool = idle.slice();
    for (let i = 0; i < open.length && pool.length > 0; i++) {
      const task = open[i];
      if (this.taskBlocked(task)) continue;
      const table = this.distances.to(world.taskPickup[task]);
      let best = -1;
      let bestDistance = unreachable;
      for (let k = 0; k < pool.length; k++) {
        const d = table[world.robotCell[pool[k]]];
        if (d < bestDistance || (d === bestDistance && best >= 0 && pool[k] < pool[best])) {
          bestDistance = d;
          best = k;
        }
      }
      if (best < 0) continue;
      this.chosen.push(pool[best], task);
      pool[best] = pool[pool.length - 1];
      pool.pop();
    }
  }

  /**
   * The same choices as the scan (nearest unclaimed robot, ties by lower index) for many
   * robots and tasks at once, e.g. 10,000 robots leaving parking: per pickup, the idle
   * robots sorted once by distance with a counting sort (stable, so ties stay in index
   * order), then each task takes the first unclaimed robot of its pickup's order.
   * O(pickups x (idle + largest distance) + tasks) instead of O(tasks x idle).
   */
  private tasksChooseByBuckets(idle: number[]): void {
    const world = this.world;
    const open = world.openTasks;
    const claimed = this.claimed;
    for (const r of idle) claimed[r] = 0;
    const orders = new Map<number, { robots: Int32Array; next: number }>();
    let left = idle.length;
    for (let i = 0; i < open.length && left > 0; i++) {
      const task = open[i];
      const pickup = world.taskPickup[task];
      if (this.taskBlocked(task)) continue;
      let order = orders.get(pickup);
      if (!order) {
        order = { robots: this.byDistance(idle, this.distances.to(pickup)), next: 0 };
        orders.set(pickup, order);
      }
      while (order.next < order.robots.length && claimed[order.robots[order.next]]) order.next++;
      if (order.next >= order.robots.length) continue;
      const robot = order.robots[order.next++];
      claimed[robot] = 1;
      left--;
      this.chosen.push(robot, task);
    }
  }

  /** Idle robots that reach `table`'s target, by distance, ties in the order of `idle`. */
  private byDistance(idle: number[], table: Int32Array): Int32Array {
    const cells = this.world.robotCell;
    let largest = -1;
    let reachable = 0;
    for (const r of idle) {
      const d = table[cells[r]];
      if (d >= unreachable) continue;
      reachable++;
      if (d > largest) largest = d;
    }
    const start = new Int32Array(largest + 2);
    for (const r of idle) {
      const d = table[cells[r]];
      if (d < unreachable) start[d + 1]++;
    }
    for (let d = 1; d <= largest + 1; d++) start[d] += start[d - 1];
    const sorted = new Int32Array(reachable);
    for (const r of idle) {
      const d = table[cells[r]];
      if (d < unreachable) sorted[start[d]++] = r;
    }
    return sorted;
  }

  private robotsChoose(idle: number[], tick: number, give: (robot: number, task: number) => void): void {
    const world = this.world;
    const open = world.openTasks;
    const { ageWeight, queueWeight } = this.options;
    // Every pickup station with work is a candidate unless the option caps the count lower.
    const maxStations = Math.min(this.options.maxStations, this.pickupCount);
    const slotOf = this.slotOf;

    // Candidate stations, oldest heads first.
    const slotCell = this.slotCell;
    const slotTasks = this.slotTasks;
    slotCell.length = 0;
    let collected = 0;
    for (let i = 0; i < open.length; i++) {
      const task = open[i];
      const pickup = world.taskPickup[task];
      if (this.taskBlocked(task)) continue;
      let slot = slotOf[pickup];
      if (slot < 0) {
        if (slotCell.length >= maxStations) {
          if (collected >= idle.length) break;
          continue;
        }
        slot = slotCell.length;
        slotOf[pickup] = slot;
        slotCell.push(pickup);
        if (slotTasks.length <= slot) slotTasks.push([]);
        slotTasks[slot].length = 0;
      }
      // A station takes at most one robot per idle robot in a pass: more tasks would not be used.
      if (slotTasks[slot].length < idle.length) {
        slotTasks[slot].push(task);
        collected++;
      }
      if (slotCell.length >= maxStations && collected >= idle.length) break;
    }
    const stations = slotCell.length;

    // Handling already queued at each candidate pickup (robots sent there, not yet loaded).
    const queuedTicks = this.queuedTicks;
    if (queueWeight > 0) {
      for (let r = 0; r < world.robotCount; r++) {
        const phase = world.robotPhase[r];
        if (phase !== phaseToPickup && phase !== phaseHandlingPickup) continue;
        const task = world.robotTask[r];
        const pickup = world.taskPickup[task];
        if (slotOf[pickup] < 0) continue;
        if (queuedTicks[pickup] === 0) this.queuedCells.push(pickup);
        queuedTicks[pickup] += phase === phaseHandlingPickup ? Math.max(0, world.robotHandlingUntil[r] - tick) : world.taskPickupTicks[task];
      }
    }

    const slotHead = this.slotHead;
    const slotTable = this.slotTable;
    const slotCredit = this.slotCredit;
    slotHead.length = stations;
    slotTable.length = stations;
    slotCredit.length = stations;
    const secondsPerTick = this.tickSeconds;
    for (let s = 0; s < stations; s++) {
      slotHead[s] = 0;
      slotTable[s] = this.distances.to(slotCell[s]);
      slotCredit[s] = this.credit(slotTasks[s][0], tick, slotCell[s], ageWeight, queueWeight, secondsPerTick);
    }

    // Greedy matching, cheapest pair first: each round the station whose nearest unclaimed
    // robot costs least takes that robot for its oldest task; the station's credit then
    // falls (one more queued pickup, a younger head). With one idle robot this is the rule
    // of the header exactly; with many, no robot's index decides who is served first.
    const k = idle.length;
    const claimed = this.claimed;
    for (const r of idle) claimed[r] = 0;
    const cells = world.robotCell;
    // Per station, its nearest unclaimed robot is found by a scan of the idle robots while
    // they are few, and read from the idle robots sorted by distance once per station
    // (a counting sort) while they are many.
    const sorted = k > smallPass;
    const orders = this.orders;
    const orderNext = this.orderNext;
    orders.length = stations;
    orderNext.length = stations;
    if (sorted) {
      for (let s = 0; s < stations; s++) {
        orders[s] = this.byDistance(idle, slotTable[s]);
        orderNext[s] = 0;
      }
    }
    const chosen = this.chosen;
    chosen.length = 0;
    for (let round = 0; round < k; round++) {
      let best = -1;
      let bestRobot = -1;
      let bestCost = Infinity;
      for (let s = 0; s < stations; s++) {
        if (slotHead[s] >= slotTasks[s].length) continue;
        const table = slotTable[s];
        let robot = -1;
        let distance = unreachable;
        if (sorted) {
          const order = orders[s];
          let n = orderNext[s];
          while (n < order.length && claimed[order[n]]) n++;
          orderNext[s] = n;
          if (n < order.length) {
            robot = order[n];
            distance = table[cells[robot]];
          }
        } else {
          for (let i = 0; i < k; i++) {
            const r = idle[i];
            if (claimed[r]) continue;
            const d = table[cells[r]];
            if (d < distance) {
              distance = d;
              robot = r;
            }
          }
        }
        if (robot < 0) continue;
        const cost = distance - slotCredit[s];
        // Ties: the station whose head task is older (it was found earlier in the scan).
        if (cost < bestCost) {
          bestCost = cost;
          best = s;
          bestRobot = robot;
        }
      }
      if (best < 0) break;
      claimed[bestRobot] = 1;
      const task = slotTasks[best][slotHead[best]++];
      chosen.push(bestRobot, task);
      if (queueWeight > 0) queuedTicks[slotCell[best]] += world.taskPickupTicks[task];
      if (slotHead[best] < slotTasks[best].length) {
        slotCredit[best] = this.credit(slotTasks[best][slotHead[best]], tick, slotCell[best], ageWeight, queueWeight, secondsPerTick);
      }
    }
    orders.length = 0;

    for (const c of slotCell) slotOf[c] = -1;
    for (const c of this.queuedCells) queuedTicks[c] = 0;
    this.queuedCells.length = 0;
    for (const c of slotCell) queuedTicks[c] = 0;
    for (let i = 0; i < chosen.length; i += 2) give(chosen[i], chosen[i + 1]);
  }

  /**
   * True while a broken-down robot stands on the task's pickup or drop: the task waits for
   * the repair instead of sending a robot to queue there for the repair time (token passing
   * holds such tasks back for the same reason: the cell ends another robot's path). Without
   * breakdowns no robot is ever broken, so no choice changes.
   */
  private taskBlocked(task: number): boolean {
    const world = this.world;
    const broken = world.robotBroken;
    const atPickup = world.occupant[world.taskPickup[task]];
    if (atPickup >= 0 && broken[atPickup] === 1) return true;
    const atDrop = world.occupant[world.taskDrop[task]];
    return atDrop >= 0 && broken[atDrop] === 1;
  }

  /** Credit of a station whose oldest open task is `task`: ageing minus the queue term, in cells. */
  private credit(task: number, tick: number, pickup: number, ageWeight: number, queueWeight: number, secondsPerTick: number): number {
    const waitedSeconds = (tick - this.world.taskRelease[task]) * secondsPerTick;
    const queuedSeconds = this.queuedTicks[pickup] * secondsPerTick;
    // A second spent queueing costs what a second of driving does: 1 / tickSeconds cells.
    return ageWeight * waitedSeconds - (queueWeight * queuedSeconds) / secondsPerTick;
  }
}
