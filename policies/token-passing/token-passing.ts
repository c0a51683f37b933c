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
 *    rest spot (a non-task endpoint) that is not the end of another path; otherwise it
 *    stays where it is.
 * Rest spots are the marked parking spots and, for robots beyond their number, rest cells
 * (sim/rest-cells.ts) that keep the floor well-formed. On well-formed floors
 * (checkWellFormed, counting the rest cells) every task is completed and no two robots
 * collide. Deviation from the paper, for floors that are not well-formed: a robot that
 * stands on plain floor goes to a free rest spot when it has nothing to do, to clear the
 * aisles.
 *
 * Token requests are made cheap without changing any choice: what a robot may take depends
 * only on the open list and on where paths end, so one list of eligible tasks (the first
 * per pickup cell, eligible-tasks.ts: followed task by task while no path end moves) serves
 * every request until one of the two changes, and a robot that found nothing asks again
 * only then (a rest revision, not every reservation change).
 * The same list counts the open tasks held back by the endpoint rule (`heldBackTaskSeconds`),
 * which is what caps token passing on floors with few drops: at most one robot per drop is
 * on its way.
 *
 * Turning and delays (sim/plan-execution.ts): with forward-only robots every search plans
 * with headings, so the reservations cover the turns; with execution delays the robots
 * follow their paths through an action dependency graph, and a robot takes the token only
 * once it has driven its path (it stands on its end cell), not when its path ends in
 * planned time.
 */
import { z } from 'zod';
import { CellKind } from '../../sim/layout.ts';
import type { Policy, PolicyContext } from '../../sim/policy.ts';
import { ReservationTable } from '../../sim/reservation-table.ts';
import { restSpotsForFleet } from '../../sim/rest-cells.ts';
import { SpaceTimeAStar } from '../../sim/space-time-astar.ts';
import { PlanExecution } from '../../sim/plan-execution.ts';
import { Phase } from '../../sim/world.ts';
import { EligibleTasks } from './eligible-tasks.ts';
import { OpenTasksByRoute } from './open-tasks-by-route.ts';
import { freeParkingSpots, pickupLegRequest, planRest, planTask, type Planner } from '../shared/task-path.ts';

// Read once: imported bindings are getters under the TypeScript loader, and these are read per robot per step.
const phaseIdle = Phase.Idle;
const phaseToPickup = Phase.ToPickup;

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
  /** Skip the requests `stillNothing` proves fruitless (same choices either way; off only to test that). */
  static skipFruitlessRequests = true;
  /** Skip or cut short the swap probes that cannot end in a swap (`trySwap`; same choices either way; off only to test that). */
  static skipFruitlessProbes = true;
  private readonly table: ReservationTable;
  private readonly planner: Planner;
  private readonly execution: PlanExecution;
  /** Tick at which each robot reaches the pickup of its task (for swaps). */
  private readonly pickupTick: Int32Array;
  /** (world version, rest revision) at each robot's last fruitless token request. */
  private readonly triedVersion: Float64Array;
  private readonly triedRevision: Float64Array;
  /**
   * The cell of a robot whose last request found the eligible-task list empty while it stood
   * off the task endpoints with nothing else to do (-1: not so). Under saturated demand the
   * open list changes at nearly every step while every new task is held back (its drop ends
   * another robot's path), and each change, like each moved path end, would wake every such
   * robot for nothing (about 150,000 of 170,000 requests on the demo hall at 40 robots). Its
   * answer cannot change while the list stays empty and the robot stays as it was (idle,
   * free to take a task, on that cell; off a rest spot also while the path ends stay put), so
   * it asks again only then (`stillNothing`).
   */
  private readonly emptyAt: Int32Array;
  /**
   * Bumped whenever the cell where some robot's path ends changes (a rest begins or is
   * given up). Whether a task may be taken depends only on these cells and the open list,
   * so a robot that found nothing asks again only when one of the two changed; the
   * reservation table's own revision moves on every reservation and would wake every idle
   * robot after every plan.
   */
  private restRevision = 0;
  /**
   * The tick at which each robot's reserved path ends (`PlanExecution.pathEnd`), as of table
   * revision `endsRevision` (-1: read again). Every robot is tested at every step for a path
   * that has ended, and the table's paths are objects scattered over the heap: a typed array
   * read per robot instead. Kept across steps (the engine does not touch the table; with
   * delays the execution's re-timed paths move the revision) and, in plain token passing,
   * within one for the robot whose request changed its path (the only one a request
   * changes).
   */
  private readonly endTick: Int32Array;
  private endsRevision = -1;
  /** The cell where each robot's reserved path ends. */
  private readonly endCell: Int32Array;
  /** 1 on pickup, drop and storage cells. */
  private readonly isTaskEndpoint: Uint8Array;
  /**
   * The eligible-task list, rebuilt at most once per change of (world version, rest
   * revision): for each pickup cell, the first open task (release order) none of whose
   * endpoints ends a robot's path. The nearest eligible task for a robot is then the
   * nearest of these, ties to the earlier in the open list, as a scan of every open task
   * would give.
   */
  private candidates = new Int32Array(64);
  private candidateCount = 0;
  /** The list itself: kept by `eligible` on delivery floors, scanned into `scanCandidates` for round trips. */
  private readonly eligible: EligibleTasks;
  private scanCandidates = new Int32Array(64);
  private candidatesVersion = -1;
  private candidatesRevision = -1;
  private readonly pickupMark: Int32Array;
  private pickupMarkId = 0;
  /** The open tasks by route, so a rebuild looks at one task per route (delivery floors). */
  private readonly routes: OpenTasksByRoute;
  /** Open tasks held back at the last rebuild (an endpoint ends a robot's path), and their task-ticks since the start. */
  private heldBack = 0;
  private heldBackTicks = 0;
  private heldBackSince = 0;
  private readonly requestQueue: Int32Array;
  private readonly swapCandidates = new Int32Array(maxSwapCandidates);
  /** Robots on their way to a pickup (`listToPickup`), valid while the world's version is `toPickupVersion` within one step. */
  private readonly toPickup: Int32Array;
  private toPickupCount = 0;
  private toPickupVersion = -1;
  /** Consecutive failed plans per robot, and the tick of its next try. */
  private readonly failures: Int32Array;
  private readonly retryAt: Float64Array;
  private readonly swapRetryAt: Float64Array;
  /** Where robots may rest: marked parking, then the fleet's rest cells (sim/rest-cells.ts). */
  private readonly restSpots: Int32Array;
  private readonly isRestSpot: Uint8Array;
  private readonly spotBuffer = new Int32Array(3);
  private taskSwaps = 0;
  /** Swap candidates whose pickup leg was probed, and those of them answered without a search (`probe`). */
  private swapProbes = 0;
  private swapProbesSkipped = 0;
  /** Token requests answered by `idleRequest` (swaps only). */
  private idleRequests = 0;
  private requests = 0;
  private failedPlans = 0;

  constructor(
    private readonly context: PolicyContext,
    options: TokenPassingOptions,
    private readonly swaps: boolean,
  ) {
    const { world, layout } = context;
    this.table = new ReservationTable(layout.cellCount, world.robotCount);
    this.planner = { world, table: this.table, search: new SpaceTimeAStar(layout, this.table, options.maxExpansions, 16, world.turnTicks), distances: context.distances };
    this.execution = new PlanExecution(world, layout, this.table);
    this.pickupTick = new Int32Array(world.robotCount).fill(-1);
    this.triedVersion = new Float64Array(world.robotCount).fill(-1);
    this.triedRevision = new Float64Array(world.robotCount).fill(-1);
    this.emptyAt = new Int32Array(world.robotCount).fill(-1);
    this.failures = new Int32Array(world.robotCount);
    this.retryAt = new Float64Array(world.robotCount);
    this.swapRetryAt = new Float64Array(world.robotCount);
    this.restSpots = restSpotsForFleet(layout, world.robotCount);
    this.isRestSpot = new Uint8Array(layout.cellCount);
    for (const c of this.restSpots) this.isRestSpot[c] = 1;
    this.isTaskEndpoint = new Uint8Array(layout.cellCount);
    for (let c = 0; c < layout.cellCount; c++) {
      const kind = layout.kind[c];
      if (kind === CellKind.Pickup || kind === CellKind.Drop || kind === CellKind.Storage) this.isTaskEndpoint[c] = 1;
    }
    this.pickupMark = new Int32Array(layout.cellCount);
    this.routes = new OpenTasksByRoute(layout.cellCount);
    this.eligible = new EligibleTasks(this.routes);
    // Every robot asks at most once per step, plus once more when displaced by a swap.
    this.requestQueue = new Int32Array(2 * world.robotCount);
    this.toPickup = new Int32Array(world.robotCount);
    this.endCell = new Int32Array(world.robotCount);
    this.endTick = new Int32Array(world.robotCount);
    for (let r = 0; r < world.robotCount; r++) {
      this.table.rest(r, world.robotCell[r], 0);
      this.endCell[r] = world.robotCell[r];
    }
  }

  step(tick: number, moves: Int32Array, turns?: Int8Array): number {
    const { world } = this.context;
    const robots = world.robotCount;
    const execution = this.execution;
    let retryTick = Infinity;
    execution.beginStep(tick);
    this.countHeldBack(tick);
    // The engine changed phases since the last step (arrivals, handling, chargers).
    this.toPickupVersion = -1;
    // Token requests in robot order; displaced robots (swaps) join the end of the queue. A
    // robot asks once its reserved path has ended (with delays the table holds the re-timed
    // paths, so it has then driven all of it).
    const requests = this.requestQueue;
    let queued = 0;
    const table = this.table;
    const ends = this.endTick;
    if (table.revision !== this.endsRevision) this.readEnds();
    for (let r = 0; r < robots; r++) if (ends[r] <= tick) requests[queued++] = r;
    // Robots displaced by a swap ask again in the same tick, but may not displace in turn:
    // chains of swaps cost a plan per link and rarely pay (a bound on the paper's recursion).
    const firstDisplaced = queued;
    for (let i = 0; i < queued; i++) {
      const r = requests[i];
      // Idle robots, and robots the engine sends to a charger or has queued for one (not broken).
      const phase = world.robotPhase[r];
      if (world.robotBroken[r] || (phase !== phaseIdle && phase !== Phase.ToCharger && phase !== Phase.WaitingForCharger)) continue;
      if (this.triedVersion[r] === world.version && this.triedRevision[r] === this.wakeRevision()) continue;
      if (this.emptyAt[r] >= 0 && TokenPassing.skipFruitlessRequests && this.stillNothing(r)) continue;
      if (this.retryAt[r] > tick) {
        retryTick = Math.min(retryTick, this.retryAt[r]);
        continue;
      }
      if (this.swaps && TokenPassing.skipFruitlessRequests && this.idleRequest(r, tick, i < firstDisplaced)) {
        this.failures[r] = 0;
        continue;
      }
      const displaced = this.request(r, tick, i < firstDisplaced);
      // Plain token passing changes only the asking robot's path; a swap touches others too (read again next step).
      if (this.swaps) this.endsRevision = -1;
      else ends[r] = execution.pathEnd(r);
      if (displaced >= 0) requests[queued++] = displaced;
      if (displaced === -2) {
        // Back off after failed plans (1, 2, 4, 8, 16 ticks): a crowded floor rarely clears in one tick.
        this.failures[r]++;
        this.retryAt[r] = tick + Math.min(16, 2 ** (this.failures[r] - 1));
        retryTick = Math.min(retryTick, this.retryAt[r]);
      } else {
        this.failures[r] = 0;
      }
    }
    if (this.endsRevision >= 0) this.endsRevision = table.revision;
    const following = execution.step(tick, moves, turns);
    // The held-back count from now on reflects this step's assignments and rests.
    this.refreshCandidates();
    return following ? tick + 1 : retryTick;
  }

  /** Reads every robot's path end tick from the table (`endTick`). */
  private readEnds(): void {
    const execution = this.execution;
    const ends = this.endTick;
    for (let r = 0; r < ends.length; r++) ends[r] = execution.pathEnd(r);
    this.endsRevision = this.table.revision;
  }

  /** Adds the task-ticks held back since the last step (the count is constant between steps: only steps change it). */
  private countHeldBack(tick: number): void {
    if (tick > this.heldBackSince) {
      this.heldBackTicks += this.heldBack * (tick - this.heldBackSince);
      this.heldBackSince = tick;
    }
    this.refreshCandidates();
  }

  /** Brings the eligible-task list (and the held-back count) up to date when the open list or a path end changed. */
  private refreshCandidates(): void {
    const world = this.context.world;
    if (this.candidatesVersion === world.version && this.candidatesRevision === this.restRevision) return;
    const revision = this.candidatesRevision;
    this.candidatesVersion = world.version;
    this.candidatesRevision = this.restRevision;
    const endRobot = this.table.endRobot;
    if (this.routes.sync(world)) {
      const eligible = this.eligible;
      eligible.update(endRobot, world.taskSerial, revision === this.restRevision);
      this.candidates = eligible.candidates;
      this.candidateCount = eligible.count;
      this.heldBack = eligible.held;
      return;
    }
    // Round trips (the index declines them): scan the open list, first eligible task per pickup.
    this.candidates = this.scanCandidates;
    let count = 0;
    let held = 0;
    const open = world.openTasks;
    const mark = this.pickupMark;
    const id = ++this.pickupMarkId;
    for (let i = 0; i < open.length; i++) {
      const task = open[i];
      const pickup = world.taskPickup[task];
      const back = world.taskReturn[task];
      if (endRobot[pickup] >= 0 || endRobot[world.taskDrop[task]] >= 0 || (back >= 0 && endRobot[back] >= 0)) {
        held++;
        continue;
      }
      if (mark[pickup] === id) continue;
      mark[pickup] = id;
      count = this.addCandidate(count, task);
    }
    this.candidateCount = count;
    this.heldBack = held;
  }

  private addCandidate(count: number, task: number): number {
    if (count === this.scanCandidates.length) {
      const grown = new Int32Array(2 * count);
      grown.set(this.scanCandidates);
      this.scanCandidates = grown;
      this.candidates = grown;
    }
    this.scanCandidates[count] = task;
    return count + 1;
  }

  /**
   * The open task with the nearest pickup whose endpoints end no other robot's path (ties:
   * the earlier in release order), or -1. `distance` receives its pickup distance.
   */
  private nearestEligible(robot: number, cell: number, toRobot: Int32Array): number {
    const world = this.context.world;
    let best = -1;
    let bestDistance = Infinity;
    this.refreshCandidates();
    if (this.isTaskEndpoint[cell] && this.table.endRobot[cell] === robot) {
      // The robot rests on a task endpoint (a drop, or a shelf's storage point): tasks ending
      // there are open to it alone, so the shared list does not apply.
      const endRobot = this.table.endRobot;
      if (this.routes.sync(world)) {
        best = this.eligible.nearestForRester(robot, cell, toRobot, endRobot, world.taskSerial);
        bestDistance = this.eligible.distance;
      } else {
        const open = world.openTasks;
        for (let i = 0; i < open.length; i++) {
          const task = open[i];
          const pickup = world.taskPickup[task];
          const d = toRobot[pickup];
          if (d >= bestDistance) continue;
          const back = world.taskReturn[task];
          if (restsOther(endRobot, pickup, robot, robot) || restsOther(endRobot, world.taskDrop[task], robot, robot) || (back >= 0 && restsOther(endRobot, back, robot, robot))) continue;
          best = task;
          bestDistance = d;
        }
      }
    } else {
      const candidates = this.candidates;
      for (let i = 0; i < this.candidateCount; i++) {
        const task = candidates[i];
        const d = toRobot[world.taskPickup[task]];
        if (d < bestDistance) {
          best = task;
          bestDistance = d;
        }
      }
    }
    this.bestDistance = bestDistance;
    return best;
  }
  private bestDistance = Infinity;

  /**
   * One token request. Returns the robot displaced by a swap (>= 0), -1 when done, -2 when
   * planning failed and the robot should ask again next tick.
   */
  private request(robot: number, tick: number, swapsAllowed: boolean): number {
    const { world, distances } = this.context;
    const table = this.table;
    this.requests++;
    this.emptyAt[robot] = -1;
    const cell = world.robotCell[robot];
    if (world.robotPhase[robot] === Phase.ToCharger) return this.goToCharger(robot, cell, tick);
    const toRobot = distances.to(cell);
    // Candidates: nearest pickup first; ties in release order (the open list order). A robot
    // queued for a charger (or due to break down) takes no task: it only goes to rest.
    const mayTake = world.mayTakeTask(robot);
    const best = mayTake ? this.nearestEligible(robot, cell, toRobot) : -1;
    const bestDistance = this.bestDistance;
    if (this.swaps && swapsAllowed && mayTake && this.swapRetryAt[robot] <= tick) {
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
        this.routes.remove(world, best);
        world.assign(robot, best);
        return -1;
      }
      this.failedPlans++;
      table.rest(robot, cell, tick);
      this.noteEnd(robot, cell);
      return -2;
    }
    // Nothing to take: leave task endpoints and aisles for a rest spot, else stay.
    if (!this.isRestSpot[cell]) {
      const parked = this.park(robot, cell, tick);
      if (parked === false) return -2;
    }
    this.triedVersion[robot] = world.version;
    this.triedRevision[robot] = this.wakeRevision();
    if (!this.swaps && mayTake && this.candidateCount === 0 && !this.isTaskEndpoint[cell]) this.emptyAt[robot] = cell;
    return -1;
  }

  /**
   * With swaps: answers robot r's token request when it would do nothing but record that
   * it asked (true), as `request` would: it is not sent to a charger, it will not look for
   * a swap (not due yet, `swapRetryAt`, or it may take no task), the eligible-task list is
   * empty (or it may take no task) and it stands on a rest spot that is not a task
   * endpoint (so neither the list for resters nor parking applies). Every table change
   * wakes such robots (`wakeRevision`): about 850,000 of the 1,020,000 requests on the demo
   * hall at 200 robots over 2 h.
   */
  private idleRequest(robot: number, tick: number, swapsAllowed: boolean): boolean {
    const world = this.context.world;
    const cell = world.robotCell[robot];
    if (world.robotPhase[robot] === Phase.ToCharger || !this.isRestSpot[cell] || this.isTaskEndpoint[cell]) return false;
    if (world.mayTakeTask(robot)) {
      if (swapsAllowed && this.swapRetryAt[robot] <= tick) return false;
      this.refreshCandidates();
      if (this.candidateCount > 0) return false;
    }
    this.requests++;
    this.idleRequests++;
    this.triedVersion[robot] = world.version;
    this.triedRevision[robot] = this.wakeRevision();
    return true;
  }

  /**
   * True when a request by robot r (its last one found the list empty, `emptyAt`) would find
   * nothing again and do nothing: the robot still idle and free to take a task on the same
   * cell, the list still empty, and, unless it stands on a rest spot (then it does not look
   * for one), the same path ends (a rest spot may have come free). Plain token passing only
   * (with swaps time matters too, see `wakeRevision`).
   */
  private stillNothing(robot: number): boolean {
    const world = this.context.world;
    const cell = this.emptyAt[robot];
    if (world.robotCell[robot] !== cell || !world.mayTakeTask(robot)) return false;
    if (!this.isRestSpot[cell] && this.triedRevision[robot] !== this.restRevision) return false;
    this.refreshCandidates();
    return this.candidateCount === 0;
  }

  /** Plans robot r to the charger the engine gave it, to rest (charge) there. -1 when planned, -2 when planning failed (retried with back-off). */
  private goToCharger(robot: number, cell: number, tick: number): number {
    const table = this.table;
    table.release(robot, tick);
    const path = planRest(this.planner, robot, cell, tick, this.context.world.goalOf(robot));
    if (path) {
      this.commit(robot, path, tick, -1);
      return -1;
    }
    this.failedPlans++;
    table.rest(robot, cell, tick);
    this.noteEnd(robot, cell);
    return -2;
  }

  /** A robot may be stopped (a breakdown) once its reserved path has ended: it rests there and no other path crosses it. */
  canStop(robot: number, tick: number): boolean {
    return this.execution.pathEnd(robot) <= tick;
  }

  /** Plans a move to the nearest free rest spot. True when planned, null when none is free, false when planning failed. */
  private park(robot: number, cell: number, tick: number): boolean | null {
    const table = this.table;
    const spots = this.spotBuffer;
    const count = freeParkingSpots(this.restSpots, this.context.distances, table, cell, spots);
    if (count === 0) return null;
    table.release(robot, tick);
    for (let i = 0; i < count; i++) {
      const path = planRest(this.planner, robot, cell, tick, spots[i]);
      if (path) {
        this.commit(robot, path, tick, -1);
        return true;
      }
    }
    this.failedPlans++;
    table.rest(robot, cell, tick);
    this.noteEnd(robot, cell);
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
    // The nearest few candidates (by their pickup, ties to the lower robot index), kept sorted.
    const candidates = this.swapCandidates;
    let count = 0;
    const endRobot = table.endRobot;
    if (this.toPickupVersion !== world.version) this.listToPickup();
    const toPickup = this.toPickup;
    for (let i = 0, n = this.toPickupCount; i < n; i++) {
      const other = toPickup[i];
      if (other === robot) continue;
      const task = world.robotTask[other];
      const pickup = world.taskPickup[task];
      const d = toRobot[pickup];
      // Only worth asking if this robot could be there before the other, and no farther than the best open task.
      if (d >= this.pickupTick[other] - tick || d >= openDistance) continue;
      if (count === maxSwapCandidates && d >= toRobot[world.taskPickup[world.robotTask[candidates[count - 1]]]]) continue;
      const drop = world.taskDrop[task];
      const back = world.taskReturn[task];
      if (restsOther(endRobot, pickup, robot, other) || restsOther(endRobot, drop, robot, other) || (back >= 0 && restsOther(endRobot, back, robot, other))) continue;
      let j = count < maxSwapCandidates ? count++ : maxSwapCandidates - 1;
      while (j > 0 && toRobot[world.taskPickup[world.robotTask[candidates[j - 1]]]] > d) {
        candidates[j] = candidates[j - 1];
        j--;
      }
      candidates[j] = other;
    }
    // Performance shortcut: only the nearest few candidates are tried, and each first by its
    // pickup leg alone; the whole task is planned only when that leg arrives earlier.
    for (let k = 0; k < count; k++) {
      const other = candidates[k];
      const task = world.robotTask[other];
      const oldPath = table.paths[other]!;
      const oldStart = table.pathStart[other];
      const otherCell = world.robotCell[other];
      // Tentatively stop the other robot where it stands, then plan this one. It may stop
      // only where no other robot's reserved path or rest comes later (it could be crossing
      // the cell where another robot will end its path); otherwise no swap with it.
      const skip = TokenPassing.skipFruitlessProbes;
      if (skip) {
        // The same tests without touching the table where their answer ends the try (same
        // choices): `isFreeFrom` reads the same before the other's path is released (it
        // ignores the robot it is asked for), and a candidate on a stop of its task cannot
        // be swapped (`standsOnStop`). The table is left as the release, probe and restore
        // would leave it: paths and rests as they were, except, past the first test, this
        // robot's path, which becomes a rest from now. The revision moves as it would have,
        // so the robots it wakes (`wakeRevision`) are the same.
        if (!table.isFreeFrom(otherCell, tick, other)) {
          table.revision++;
          continue;
        }
        if (this.standsOnStop(otherCell, task) || this.pickupTooLate(robot, cell, tick, other, task)) {
          this.swapProbes++;
          this.swapProbesSkipped++;
          table.rest(robot, cell, tick);
          continue;
        }
      }
      table.release(other, tick);
      if (!skip && !table.isFreeFrom(otherCell, tick, other)) {
        table.reserve(other, oldPath, oldStart, tick);
        continue;
      }
      table.rest(other, otherCell, tick);
      table.release(robot, tick);
      const leg = this.probe(robot, cell, tick, other, otherCell, task);
      // The probe's leg is the plan's first leg (same request and table; `skipFruitlessProbes` off: searched again).
      const plan = leg > 0 ? planTask(this.planner, robot, cell, tick, task, undefined, TokenPassing.skipFruitlessProbes ? leg : -1) : null;
      if (plan && plan.pickupTick < this.pickupTick[other]) {
        this.noteEnd(other, otherCell);
        world.unassign(other);
        this.pickupTick[other] = -1;
        this.commit(robot, plan.path, tick, plan.pickupTick);
        world.assign(robot, task);
        this.taskSwaps++;
        return other;
      }
      table.rest(robot, cell, tick);
      table.reserve(other, oldPath, oldStart, tick);
    }
    return -1;
  }

  /**
   * The swap probe: when robot r, planned from `cell` at `tick` against the table with the
   * other robot stopped on `otherCell`, reaches the pickup of the other's task before the
   * other would (its pickup leg alone, searched; the whole task is planned only then), the
   * length of that leg, left in the search's `path`; else -1.
   * Two exact shortcuts (`skipFruitlessProbes`), each proving that the answer, or the plan
   * after it, is a failure, so the swap is not made either way:
   *  - the other robot stands on a stop of the task (`standsOnStop`, checked by `trySwap`
   *    before it touches the table);
   *  - the leg is searched with the other's pickup tick as its deadline: the search stops as
   *    soon as it has proved it cannot arrive before it (sim/space-time-astar.ts), where the
   *    full search would go on to find a later arrival that the probe rejects anyway.
   */
  private probe(robot: number, cell: number, tick: number, other: number, otherCell: number, task: number): number {
    const skip = TokenPassing.skipFruitlessProbes;
    this.swapProbes++;
    if (skip && this.standsOnStop(otherCell, task)) {
      this.swapProbesSkipped++;
      return -1;
    }
    const deadline = this.pickupTick[other];
    const request = pickupLegRequest(this.planner, robot, cell, tick, task);
    if (skip) request.deadline = deadline;
    const length = this.planner.search.find(request);
    return length >= 0 && tick + length - 1 < deadline ? length : -1;
  }

  /**
   * True when robot r, `dist` cells from the other's pickup, cannot start the pickup
   * handling there before the other robot would, whatever path it takes: the earliest tick
   * from tick + dist at which the pickup is free for the whole handling, the other's own
   * reservations left out as the tentative stop leaves them out (`earliestStay`), is not
   * before the other's pickup tick. That tick is the key of the probe's start state (the
   * goal-ready heuristic, sim/space-time-astar.ts), which bounds every arrival from below,
   * so the probe would fail at its first pop (about 21,600 of 22,600 deadline stops on the
   * demo hall at 200 robots): it is answered without stopping the other, searching and
   * restoring. A robot standing on the pickup is left to the probe (it needs no window).
   */
  private pickupTooLate(robot: number, cell: number, tick: number, other: number, task: number): boolean {
    const world = this.context.world;
    const pickup = world.taskPickup[task];
    if (cell === pickup) return false;
    const dist = this.context.distances.to(pickup)[cell];
    return this.table.earliestStay(pickup, tick + 1, tick + dist, world.taskPickupTicks[task], robot, other) >= this.pickupTick[other];
  }

  /**
   * The robots on their way to a pickup (phase ToPickup), in index order: the robots a swap
   * may take a task from, as a scan of every robot in index order finds them. Phases change
   * between steps (the engine) and, within a step, only by this policy's assign and unassign,
   * which move the world's version: the list is kept while neither happened.
   */
  private listToPickup(): void {
    const world = this.context.world;
    const phase = world.robotPhase;
    const list = this.toPickup;
    let count = 0;
    for (let r = 0; r < world.robotCount; r++) if (phase[r] === phaseToPickup) list[count++] = r;
    this.toPickupCount = count;
    this.toPickupVersion = world.version;
  }

  /**
   * True when a robot on `otherCell`, stopped there for good, makes `planTask` fail for the
   * task: the cell is one of its stops (under skewed drops a robot that has just delivered
   * often takes a task to the same drop, and stands on it as the others probe). The leg to
   * that stop then finds no arrival window (a handling stop: the cell is held from now on)
   * or fails at once (the rest goal: another robot rests on it).
   */
  private standsOnStop(otherCell: number, task: number): boolean {
    const world = this.context.world;
    return otherCell === world.taskPickup[task] || otherCell === world.taskDrop[task] || otherCell === world.taskReturn[task];
  }

  /**
   * The revision that wakes a robot that found nothing. Plain token passing: the rest
   * revision (what it may take depends only on the open list and path ends). With swaps
   * the answer also depends on time (whether this robot would reach another's pickup
   * first), so any reservation change wakes it, as before the rest revision existed; the
   * swap retry delay bounds the cost.
   */
  private wakeRevision(): number {
    return this.swaps ? this.table.revision : this.restRevision;
  }

  /** Records where robot r's reserved path now ends; a change wakes robots that found nothing. */
  private noteEnd(robot: number, cell: number): void {
    if (this.endCell[robot] !== cell) {
      this.endCell[robot] = cell;
      this.restRevision++;
    }
  }

  private commit(robot: number, path: Int32Array, tick: number, pickupTick: number): void {
    this.noteEnd(robot, path[path.length - 1]);
    this.table.reserve(robot, path, tick);
    this.pickupTick[robot] = pickupTick;
  }

  counters(): Record<string, number> {
    // Up to the end of the run: nothing changes the count after the last step.
    this.countHeldBack(this.context.world.currentTick);
    return {
      heldBackTaskSeconds: this.heldBackTicks * this.context.tickSeconds,
      restCells: this.restSpots.length - this.context.layout.parking.length,
      tokenRequests: this.requests,
      searches: this.planner.search.searches,
      unreachableSkips: this.planner.search.unreachableSkips,
      expansions: this.planner.search.expansions,
      taskSwaps: this.taskSwaps,
      ...(this.swaps ? { swapProbes: this.swapProbes, swapProbesSkipped: this.swapProbesSkipped, deadlineStops: this.planner.search.deadlineStops, idleRequests: this.idleRequests } : {}),
      failedPlans: this.failedPlans,
      ...(this.execution.dependent ? { dependencyWaits: this.execution.dependencyWaits, dependencyWaitSeconds: this.execution.dependencyWaitTicks * this.context.tickSeconds } : {}),
    };
  }
}

/** True when a robot other than `a` and `b` has its path end on `cell`. */
function restsOther(endRobot: Int32Array, cell: number, a: number, b: number): boolean {
  const rester = endRobot[cell];
  return rester >= 0 && rester !== a && rester !== b;
}
