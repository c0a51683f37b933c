/**
 * Task dispatch for the PIBT policy: which idle robot takes which open task.
 *
 * Few open tasks (idle robots at least as many): each open task, oldest first, takes the
 * nearest idle robot (grid distance to its pickup; ties: lower robot index). Every task is
 * served at once; the order only decides who travels.
 *
 * A backlog (more open tasks than idle robots): each idle robot, in index order, takes the
 * oldest open task of the pickup station with the lowest cost
 *   distance(robot, pickup) + queueWeight * (handling seconds already queued at the pickup)
 *                           - ageWeight * (seconds the station's oldest open task has waited),
 * in cells. This is the ageing cost of flow-batch's epoch assignment
 * (policies/flow-batch/epoch-assignment.ts; assignment after Kuhn 1955 and Jonker &
 * Volgenant 1987), applied greedily one robot at a time so that it stays O(idle robots x
 * stations) for 10,000 robots; the queue term (handling time of robots already sent to the
 * pickup and not yet loaded) is join-the-shortest-queue routing (common practice).
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
 * `maxStations` distinct pickups are found and at least as many tasks as idle robots, so a
 * pass costs O(scanned tasks + robots + idle robots x maxStations) (one pass over the robots
 * sums the queued handling) and never O(open tasks x robots) under a deep backlog. A station
 * whose collected tasks run out in a pass drops out of that pass only. With few open tasks
 * and many idle robots (10,000 robots leaving parking) the tasks choose through per-pickup
 * orders of the idle robots by distance (a counting sort), O(pickups x (robots + largest
 * distance)) instead of O(tasks x robots).
 */
import type { DistanceTables } from '../../sim/distance-table.ts';
import { unreachable } from '../../sim/distance-table.ts';
import { Phase, type World } from '../../sim/world.ts';

/** Above this many (idle robots x open tasks) pairs, tasks choose by sorted buckets instead of scans. */
const bucketThreshold = 1 << 16;

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

  constructor(
    private readonly world: World,
    private readonly distances: DistanceTables,
    private readonly tickSeconds: number,
    private readonly options: DispatchOptions,
  ) {
    this.slotOf = new Int32Array(world.layout.cellCount).fill(-1);
    this.queuedTicks = new Float64Array(world.layout.cellCount);
    this.claimed = new Uint8Array(world.robotCount);
  }

  /** Assigns open tasks to the idle robots (in index order) through `give`. */
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
    const { ageWeight, queueWeight, maxStations } = this.options;
    const slotOf = this.slotOf;

    // Candidate stations, oldest heads first.
    const slotCell = this.slotCell;
    const slotTasks = this.slotTasks;
    slotCell.length = 0;
    let collected = 0;
    for (let i = 0; i < open.length; i++) {
      const task = open[i];
      const pickup = world.taskPickup[task];
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
      slotTasks[slot].push(task);
      collected++;
      if (slotCell.length >= maxStations && collected >= idle.length) break;
    }
    const stations = slotCell.length;

    // Handling already queued at each candidate pickup (robots sent there, not yet loaded).
    const queuedTicks = this.queuedTicks;
    if (queueWeight > 0) {
      for (let r = 0; r < world.robotCount; r++) {
        const phase = world.robotPhase[r];
        if (phase !== Phase.ToPickup && phase !== Phase.HandlingPickup) continue;
        const task = world.robotTask[r];
        const pickup = world.taskPickup[task];
        if (slotOf[pickup] < 0) continue;
        if (queuedTicks[pickup] === 0) this.queuedCells.push(pickup);
        queuedTicks[pickup] += phase === Phase.HandlingPickup ? Math.max(0, world.robotHandlingUntil[r] - tick) : world.taskPickupTicks[task];
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

    const chosen = this.chosen;
    chosen.length = 0;
    for (const robot of idle) {
      const cell = world.robotCell[robot];
      let best = -1;
      let bestCost = Infinity;
      for (let s = 0; s < stations; s++) {
        if (slotHead[s] >= slotTasks[s].length) continue;
        const d = slotTable[s][cell];
        if (d >= unreachable) continue;
        const cost = d - slotCredit[s];
        // Ties: the station whose head task is older (it was found earlier in the scan).
        if (cost < bestCost) {
          bestCost = cost;
          best = s;
        }
      }
      if (best < 0) continue;
      const task = slotTasks[best][slotHead[best]++];
      chosen.push(robot, task);
      // The station now holds one more queued pickup and a younger head.
      if (queueWeight > 0) queuedTicks[slotCell[best]] += world.taskPickupTicks[task];
      if (slotHead[best] < slotTasks[best].length) {
        slotCredit[best] = this.credit(slotTasks[best][slotHead[best]], tick, slotCell[best], ageWeight, queueWeight, secondsPerTick);
      }
    }

    for (const c of slotCell) slotOf[c] = -1;
    for (const c of this.queuedCells) queuedTicks[c] = 0;
    this.queuedCells.length = 0;
    for (const c of slotCell) queuedTicks[c] = 0;
    for (let i = 0; i < chosen.length; i += 2) give(chosen[i], chosen[i + 1]);
  }

  /** Credit of a station whose oldest open task is `task`: ageing minus the queue term, in cells. */
  private credit(task: number, tick: number, pickup: number, ageWeight: number, queueWeight: number, secondsPerTick: number): number {
    const waitedSeconds = (tick - this.world.taskRelease[task]) * secondsPerTick;
    const queuedSeconds = this.queuedTicks[pickup] * secondsPerTick;
    // A second spent queueing costs what a second of driving does: 1 / tickSeconds cells.
    return ageWeight * waitedSeconds - (queueWeight * queuedSeconds) / secondsPerTick;
  }
}
