/**
 * Token passing (TP) and token passing with task swaps (TPTS) for lifelong multi-agent
 * pickup and delivery: Ma, Li, Kumar, Koenig, "Lifelong Multi-Agent Path Finding for Online
 * Pickup and Delivery Tasks", AAMAS 2017.
 *
 * The token holds every robot's reserved path. A robot whose path has ended takes the
 * token and:
 *  - TP: picks, among open tasks whose pickup and drop are not the end of another robot's
 *    path, the one with the nearest pickup, and plans the whole task with space-time A*
 *    against the reserved paths, ending in a rest at the drop;
 *  - TPTS: also considers tasks assigned to another robot but not yet picked up, and takes
 *    one if it reaches the pickup earlier than that robot would; the displaced robot then
 *    takes the token in turn;
 *  - with no task it can take, a robot standing on a task endpoint moves to the nearest
 *    parking spot (a non-task endpoint) that is not the end of another path; otherwise it
 *    stays where it is.
 * On well-formed layouts (checkWellFormed) every task is completed and no two robots
 * collide. Deviation from the paper, for floors that are not well-formed: a robot that
 * starts on plain floor goes to free parking when it has nothing to do, to clear the aisles.
 */
import { z } from 'zod';
import { CellKind } from '../../sim/layout.ts';
import type { Policy, PolicyContext } from '../../sim/policy.ts';
import { ReservationTable } from '../../sim/reservation-table.ts';
import { SpaceTimeAStar } from '../../sim/space-time-astar.ts';
import { Phase } from '../../sim/world.ts';
import { freeParkingSpots, planRest, planTask, type Planner } from '../shared/task-path.ts';

export const tokenPassingOptions = z
  .object({
    maxExpansions: z.number().int().positive().default(200_000),
  })
  .strict();
export type TokenPassingOptions = z.infer<typeof tokenPassingOptions>;

export const tokenPassingOptionDocs = [
  { name: 'maxExpansions', default: 200_000, unit: 'states', description: 'space-time A* expansion limit per leg; a failed search is retried on the next tick' },
];

/** Robots a free robot considers taking a task from, nearest pickups first (swaps only). */
const maxSwapCandidates = 3;
/** Ticks a robot that found no task to swap waits before it looks for one again. */
const swapRetryTicks = 8;

export class TokenPassing implements Policy {
  private readonly table: ReservationTable;
  private readonly planner: Planner;
  /** Tick at which each robot's reserved path ends. */
  private readonly pathEnd: Int32Array;
  /** Tick at which each robot reaches the pickup of its task (for swaps). */
  private readonly pickupTick: Int32Array;
  /** (world version, table revision) at each robot's last fruitless token request. */
  private readonly triedVersion: Float64Array;
  private readonly triedRevision: Float64Array;
  /** Consecutive failed plans per robot, and the tick of its next try. */
  private readonly failures: Int32Array;
  private readonly retryAt: Float64Array;
  private readonly swapRetryAt: Float64Array;
  private taskSwaps = 0;
  private requests = 0;
  private failedPlans = 0;

  constructor(
    private readonly context: PolicyContext,
    options: TokenPassingOptions,
    private readonly swaps: boolean,
  ) {
    const { world, layout } = context;
    this.table = new ReservationTable(layout.cellCount, world.robotCount);
    this.planner = { world, table: this.table, search: new SpaceTimeAStar(layout, this.table, options.maxExpansions), distances: context.distances };
    this.pathEnd = new Int32Array(world.robotCount);
    this.pickupTick = new Int32Array(world.robotCount).fill(-1);
    this.triedVersion = new Float64Array(world.robotCount).fill(-1);
    this.triedRevision = new Float64Array(world.robotCount).fill(-1);
    this.failures = new Int32Array(world.robotCount);
    this.retryAt = new Float64Array(world.robotCount);
    this.swapRetryAt = new Float64Array(world.robotCount);
    for (let r = 0; r < world.robotCount; r++) this.table.rest(r, world.robotCell[r], 0);
  }

  step(tick: number, moves: Int32Array): number {
    const { world } = this.context;
    const robots = world.robotCount;
    let retryTick = Infinity;
    // Token requests in robot order; displaced robots (swaps) join the end of the queue.
    const requests: number[] = [];
    for (let r = 0; r < robots; r++) if (this.pathEnd[r] <= tick) requests.push(r);
    // Robots displaced by a swap ask again in the same tick, but may not displace in turn:
    // chains of swaps cost a plan per link and rarely pay (a bound on the paper's recursion).
    const firstDisplaced = requests.length;
    for (let i = 0; i < requests.length; i++) {
      const r = requests[i];
      if (world.robotPhase[r] !== Phase.Idle) continue;
      if (this.triedVersion[r] === world.version && this.triedRevision[r] === this.table.revision) continue;
      if (this.retryAt[r] > tick) {
        retryTick = Math.min(retryTick, this.retryAt[r]);
        continue;
      }
      const displaced = this.request(r, tick, i < firstDisplaced);
      if (displaced >= 0) requests.push(displaced);
      if (displaced === -2) {
        // Back off after failed plans (1, 2, 4, 8, 16 ticks): a crowded floor rarely clears in one tick.
        this.failures[r]++;
        this.retryAt[r] = tick + Math.min(16, 2 ** (this.failures[r] - 1));
        retryTick = Math.min(retryTick, this.retryAt[r]);
      } else {
        this.failures[r] = 0;
      }
    }
    let following = false;
    for (let r = 0; r < robots; r++) {
      if (this.pathEnd[r] > tick) {
        moves[r] = this.table.positionAt(r, tick + 1);
        following = true;
      }
    }
    return following ? tick + 1 : retryTick;
  }

  /**
   * One token request. Returns the robot displaced by a swap (>= 0), -1 when done, -2 when
   * planning failed and the robot should ask again next tick.
   */
  private request(robot: number, tick: number, swapsAllowed: boolean): number {
    const { world, distances, layout } = this.context;
    const table = this.table;
    this.requests++;
    const cell = world.robotCell[robot];
    const toRobot = distances.to(cell);
    const endRobot = table.endRobot;
    const freeEndpoint = (c: number, owner: number) => endRobot[c] < 0 || endRobot[c] === robot || endRobot[c] === owner;

    // Candidates: nearest pickup first; ties in release order (the open list order).
    let best = -1;
    let bestDistance = Infinity;
    for (const task of world.openTasks) {
      const d = toRobot[world.taskPickup[task]];
      if (d >= bestDistance) continue;
      if (!freeEndpoint(world.taskPickup[task], -1) || !freeEndpoint(world.taskDrop[task], -1)) continue;
      const back = world.taskReturn[task];
      if (back >= 0 && !freeEndpoint(back, -1)) continue;
      best = task;
      bestDistance = d;
    }
    if (this.swaps && swapsAllowed && this.swapRetryAt[robot] <= tick) {
      const displaced = this.trySwap(robot, tick, best >= 0 ? bestDistance : Infinity);
      if (displaced !== -1) return displaced;
      // Performance shortcut: a robot that found no swap waits a few ticks before looking again.
      this.swapRetryAt[robot] = tick + swapRetryTicks;
    }
    if (best >= 0) {
      table.release(robot, tick);
      const plan = planTask(this.planner, robot, cell, tick, best);
      if (plan) {
        this.commit(robot, plan.path, tick, plan.pickupTick);
        world.assign(robot, best);
        return -1;
      }
      this.failedPlans++;
      table.rest(robot, cell, tick);
      this.pathEnd[robot] = tick;
      return -2;
    }
    // Nothing to take: leave task endpoints and aisles for parking, else stay.
    const kind = layout.kind[cell];
    if (kind !== CellKind.Parking) {
      const parked = this.park(robot, cell, tick);
      if (parked === false) return -2;
    }
    this.triedVersion[robot] = world.version;
    this.triedRevision[robot] = table.revision;
    return -1;
  }

  /** Plans a move to the nearest free parking spot. True when planned, null when none is free, false when planning failed. */
  private park(robot: number, cell: number, tick: number): boolean | null {
    const { layout, distances } = this.context;
    const table = this.table;
    const spots = freeParkingSpots(layout, distances, table, cell);
    if (spots.length === 0) return null;
    table.release(robot, tick);
    for (let i = 0; i < Math.min(3, spots.length); i++) {
      const path = planRest(this.planner, robot, cell, tick, spots[i]);
      if (path) {
        this.commit(robot, path, tick, -1);
        return true;
      }
    }
    this.failedPlans++;
    table.rest(robot, cell, tick);
    this.pathEnd[robot] = tick;
    return false;
  }

  /**
   * Token passing with task swaps: take a task assigned to another robot, not yet picked up,
   * whose pickup this robot reaches earlier. Returns the displaced robot or -1.
   */
  private trySwap(robot: number, tick: number, openDistance: number): number {
    const { world, distances } = this.context;
    const table = this.table;
    const cell = world.robotCell[robot];
    const toRobot = distances.to(cell);
    const candidates: number[] = [];
    for (let other = 0; other < world.robotCount; other++) {
      if (other === robot || world.robotPhase[other] !== Phase.ToPickup) continue;
      const task = world.robotTask[other];
      const pickup = world.taskPickup[task];
      const d = toRobot[pickup];
      // Only worth asking if this robot could be there before the other, and no farther than the best open task.
      if (d >= this.pickupTick[other] - tick || d >= openDistance) continue;
      const endpointsFree = [pickup, world.taskDrop[task], world.taskReturn[task]].every(
        (c) => c < 0 || table.endRobot[c] < 0 || table.endRobot[c] === robot || table.endRobot[c] === other,
      );
      if (endpointsFree) candidates.push(other);
    }
    candidates.sort((a, b) => toRobot[world.taskPickup[world.robotTask[a]]] - toRobot[world.taskPickup[world.robotTask[b]]] || a - b);
    // Performance shortcut: only the nearest few candidates are tried, and each first by its
    // pickup leg alone; the whole task is planned only when that leg arrives earlier.
    for (const other of candidates.slice(0, maxSwapCandidates)) {
      const task = world.robotTask[other];
      const oldPath = table.paths[other]!;
      const oldStart = table.pathStart[other];
      const oldEnd = this.pathEnd[other];
      const otherCell = world.robotCell[other];
      // Tentatively stop the other robot where it stands, then plan this one. It may stop
      // only where no other robot's reserved path or rest comes later (it could be crossing
      // the cell where another robot will end its path); otherwise no swap with it.
      table.release(other, tick);
      if (!table.isFreeFrom(otherCell, tick, other)) {
        table.reserve(other, oldPath, oldStart, tick);
        continue;
      }
      table.rest(other, otherCell, tick);
      table.release(robot, tick);
      const pickup = world.taskPickup[task];
      const leg = this.planner.search.search({
        robot,
        start: cell,
        startTick: tick,
        goal: pickup,
        heuristic: distances.to(pickup),
        holdTicks: world.taskPickupTicks[task],
        restForever: false,
      });
      const earlier = leg !== null && tick + leg.length - 1 < this.pickupTick[other];
      const plan = earlier ? planTask(this.planner, robot, cell, tick, task) : null;
      if (plan && plan.pickupTick < this.pickupTick[other]) {
        world.unassign(other);
        this.pathEnd[other] = tick;
        this.pickupTick[other] = -1;
        this.commit(robot, plan.path, tick, plan.pickupTick);
        world.assign(robot, task);
        this.taskSwaps++;
        return other;
      }
      table.rest(robot, cell, tick);
      table.reserve(other, oldPath, oldStart, tick);
      this.pathEnd[other] = oldEnd;
    }
    return -1;
  }

  private commit(robot: number, path: Int32Array, tick: number, pickupTick: number): void {
    this.table.reserve(robot, path, tick);
    this.pathEnd[robot] = tick + path.length - 1;
    this.pickupTick[robot] = pickupTick;
  }

  counters(): Record<string, number> {
    return {
      tokenRequests: this.requests,
      searches: this.planner.search.searches,
      unreachableSkips: this.planner.search.unreachableSkips,
      expansions: this.planner.search.expansions,
      taskSwaps: this.taskSwaps,
      failedPlans: this.failedPlans,
    };
  }
}

