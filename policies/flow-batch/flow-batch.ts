/**
 * Flow-batch: centralized batch dispatch plus prioritized planning for lifelong pickup and
 * delivery.
 *
 * Every epoch (`epochSeconds`, at least one tick; epochs fall on multiples of the epoch
 * length) the controller collects the free robots (idle, holding no task) and the open
 * tasks and assigns them optimally over true grid distances (epoch-assignment.ts:
 * rectangular linear assignment, Kuhn 1955 / Jonker & Volgenant 1987). Ageing is a cost
 * credit, not a bound: `ageWeight` cells per second waited are subtracted from the
 * robot-to-pickup distance, so a task far from every robot is eventually cheaper than any
 * task released long enough after it, and no task waits forever.
 *
 * The new pairs are then planned one at a time against the paths already reserved
 * (prioritized planning: Erdmann & Lozano-Perez 1987; Silver 2005), each robot's whole task
 * with space-time A* (planTask), ending in a rest at its last stop. Priority: lowest
 * assignment cost first, then lowest robot index. Because the cost carries the ageing
 * credit, the oldest tasks plan first, on the emptiest table, and are the least likely to
 * fail. A task is given to its robot (`world.assign`) only after the plan succeeded; a robot
 * whose planning fails keeps its previous path, the task stays open, and both try again at
 * the next dispatch.
 *
 * Two tasks of one epoch may end on the same cell (two parcels for one chute); the second
 * robot then finds the cell taken by the first one's rest. It joins another round: the
 * assignment is solved again for the robots still blocked against the tasks still open.
 * The first pair of a round is never blocked, so there are at most as many rounds as free
 * robots.
 *
 * Where a path ends (option `restAt`, default 'parking'): a planned task path goes on from
 * its last stop to the nearest free parking spot and rests there, so a drop is never the
 * end of a path and never blocks the next task for it; robots driving to parking count as
 * free and are re-planned from where they stand. Measured on the demo hall (24 robots,
 * 900 tasks/h, 3 x 2 h): mean lead time 54 s against 85 s when paths rest on the drop as
 * in token passing ('drop'), p95 78 s against 214 s, at equal throughput. With no free spot
 * the plan fails and the robot waits for one (more robots than spots: not well-formed).
 *
 * Pickup queues (option `pickupQueueLimit`, default 4): a task is a candidate only while
 * fewer than that many robots are bound for its pickup (assigned, not yet there), counting
 * the candidates taken before it in the same epoch. More robots would only wait in a queue
 * planned into space-time, long before their turn, while a robot freed later might be
 * nearer; they stay free (parked) instead, which the run reports as parked while tasks are
 * open. Measured on the demo hall (8 pickups, 4 s each) under a deep backlog (6,000
 * tasks/h, 3 x 2 h): 200 robots 3,591 ± 61 tasks/h with a limit of 4 against 3,328 ± 49
 * without (3: 3,610 ± 39, 5: 3,592 ± 67), 100 robots 3,361 ± 4 against 3,339 ± 69, 64
 * robots 3,108 ± 36 against 3,040 ± 68; at 900 tasks/h (10, 24, 38 robots, 3 x 4 h) lead
 * time and throughput equal within their intervals for limits 0, 3, 4 and 6. The planner
 * also stops spending its time on long queue waits: 200 robots saturated, 2 h, about 3x
 * fewer wall seconds.
 *
 * Robots without a task go to the nearest parking spot that is not the end of another path,
 * at once (not only at epochs), so drops and aisles clear quickly.
 *
 * Choices beyond the plain scheme, and why:
 *  - "Free" includes idle robots still on their way to parking: they hold only a parking
 *    reservation, so a dispatch may send them straight to a pickup (their plan starts where
 *    they stand at this tick; a failed plan restores the rest of the parking path).
 *  - Option `assignOnFree` (default on): also dispatch at any tick where a robot finished
 *    its task, not only at epochs. Measured on the demo hall (4 simulated hours, 900
 *    tasks/h, replications 1-3): with 40 robots mean lead time 77/93/74 s instead of
 *    86/207/79 s; with 10 robots (overloaded) 2881/2899/2924 tasks delivered instead of
 *    2745/2763/2793. Two effects: in overload no robot idles until the epoch while tasks
 *    wait; and a popular drop is served faster, because a task may not end where another
 *    path rests, so tasks for one chute are served one robot at a time, and the robot that
 *    just tipped into that chute may take the next parcel for it at once. Tasks released
 *    between frees still wait for the next epoch and are batched there.
 *
 * Collision freedom is the token-passing argument (Ma, Li, Kumar, Koenig, AAMAS 2017): every
 * path is planned against all reserved paths and rests, ends in a rest that nobody crosses,
 * and a task is only taken when none of its endpoints is the rest of another robot. The
 * engine's validator checks it independently.
 *
 * Turning and delays (sim/plan-execution.ts): with forward-only robots every search plans
 * with headings; with execution delays robots follow their paths through an action
 * dependency graph, and a robot is free for a dispatch or a parking plan only while it is
 * on its plan (a robot behind it is re-planned once it has caught up, or has driven its
 * path).
 *
 * step() returns tick + 1 while any robot follows a path; otherwise the next epoch tick while
 * tasks are open and a robot is idle (or a parking plan must be retried), so the engine wakes
 * the policy; Infinity when there is nothing to do.
 */
import { z } from 'zod';
import type { Policy, PolicyContext, PolicyOptionDoc } from '../../sim/policy.ts';
import { ReservationTable } from '../../sim/reservation-table.ts';
import { restSpotsForFleet } from '../../sim/rest-cells.ts';
import { SpaceTimeAStar } from '../../sim/space-time-astar.ts';
import { PlanExecution } from '../../sim/plan-execution.ts';
import { Phase } from '../../sim/world.ts';
import { freeParkingSpots, planRest, planTask, type ParkingAfter, type Planner } from '../shared/task-path.ts';
import { EpochAssigner, taskEndpoints } from './epoch-assignment.ts';

// Read once: imported bindings are getters under the TypeScript loader, and these are read per robot per step.
const phaseToPickup = Phase.ToPickup;

export const flowBatchOptions = z
  .object({
    epochSeconds: z.number().positive().finite().default(5),
    ageWeight: z.number().nonnegative().finite().default(0.1),
    maxTasksPerEpoch: z.number().int().positive().default(200),
    pickupQueueLimit: z.number().int().nonnegative().default(4),
    assignOnFree: z.boolean().default(true),
    maxExpansions: z.number().int().positive().default(200_000),
    restAt: z.enum(['drop', 'parking']).default('parking'),
  })
  .strict();
export type FlowBatchOptions = z.infer<typeof flowBatchOptions>;

export const flowBatchOptionDocs: PolicyOptionDoc[] = [
  { name: 'epochSeconds', default: 5, unit: 's', description: 'time between two dispatch epochs (at least one tick)' },
  { name: 'ageWeight', default: 0.1, unit: 'cells/s', description: 'cost credit per second a task has waited, subtracted from the robot-to-pickup distance; 0 disables ageing' },
  { name: 'maxTasksPerEpoch', default: 200, unit: 'tasks', description: 'open tasks (oldest first) considered per epoch, bounding the assignment matrix' },
  { name: 'pickupQueueLimit', default: 4, unit: 'robots', description: 'at most this many robots assigned to one pickup and not yet there; more would only queue for it (0: no limit)' },
  { name: 'assignOnFree', default: true, unit: 'flag', description: 'also dispatch at any tick where a robot finishes its task, not only at epochs' },
  { name: 'maxExpansions', default: 200_000, unit: 'states', description: 'space-time A* expansion limit per leg; a failed plan is retried next epoch' },
  { name: 'restAt', default: 'parking', unit: 'drop|parking', description: "where a planned task path ends: 'parking' drives on to the nearest free parking spot after the last stop, so a drop never blocks the next task for it; 'drop' rests on the drop as token passing does" },
];

export class FlowBatch implements Policy {
  private readonly table: ReservationTable;
  private readonly planner: Planner;
  private readonly execution: PlanExecution;
  private readonly assigner: EpochAssigner;
  private readonly epochTicks: number;
  private nextEpoch = 0;
  /** Robot held a task at the previous step (assignOnFree notices robots that just finished). */
  private readonly wasBusy: Uint8Array;
  /** (world version, table revision) at each robot's last fruitless parking attempt. */
  private readonly parkTriedVersion: Float64Array;
  private readonly parkTriedRevision: Float64Array;
  /** After a failed parking plan, the tick of the next attempt (the next epoch). */
  private readonly parkRetryTick: Int32Array;
  private readonly endpoints = [0, 0, 0];
  private epochs = 0;
  private rounds = 0;
  private assigned = 0;
  private failedPlans = 0;
  private candidateTasks = 0;
  private parkFailures = 0;
  /** Consecutive failed plans per robot, and the tick before which it sits out dispatches. */
  private readonly failures: Int32Array;
  private readonly retryAt: Float64Array;
  /** Where robots may rest: marked parking, then the fleet's rest cells (sim/rest-cells.ts). */
  private readonly restSpots: Int32Array;
  private readonly isRestSpot: Uint8Array;
  private readonly spotBuffer = new Int32Array(3);
  /**
   * Open tasks no robot may take under the policy's rules (their pickup's queue is full;
   * with restAt 'drop' also an endpoint where a robot's path ends), counted after every step
   * (only steps change it) and integrated over time as task-ticks.
   */
  private heldBack = 0;
  private heldBackTicks = 0;
  private heldBackSince = 0;
  /** Pickup and storage cells, and per cell the robots bound for it. */
  private readonly pickupCells: Int32Array;
  private readonly boundForPickup: Int32Array;

  constructor(
    private readonly context: PolicyContext,
    private readonly options: FlowBatchOptions,
  ) {
    const { world, layout } = context;
    this.table = new ReservationTable(layout.cellCount, world.robotCount);
    this.planner = { world, table: this.table, search: new SpaceTimeAStar(layout, this.table, options.maxExpansions, 16, world.turnTicks), distances: context.distances };
    this.execution = new PlanExecution(world, layout, this.table);
    this.assigner = new EpochAssigner(world.robotCount, layout.cellCount, layout.pickups.length + layout.storage.length);
    this.epochTicks = Math.max(1, Math.round(options.epochSeconds / context.tickSeconds));
    this.wasBusy = new Uint8Array(world.robotCount);
    this.parkTriedVersion = new Float64Array(world.robotCount).fill(-1);
    this.parkTriedRevision = new Float64Array(world.robotCount).fill(-1);
    this.parkRetryTick = new Int32Array(world.robotCount);
    this.failures = new Int32Array(world.robotCount);
    this.retryAt = new Float64Array(world.robotCount);
    this.restSpots = restSpotsForFleet(layout, world.robotCount);
    this.isRestSpot = new Uint8Array(layout.cellCount);
    for (const c of this.restSpots) this.isRestSpot[c] = 1;
    this.pickupCells = new Int32Array(layout.pickups.length + layout.storage.length);
    this.pickupCells.set(layout.pickups);
    this.pickupCells.set(layout.storage, layout.pickups.length);
    this.boundForPickup = new Int32Array(layout.cellCount);
    for (let r = 0; r < world.robotCount; r++) this.table.rest(r, world.robotCell[r], 0);
  }

  /** Free rest spots (no robot's path ends there) nearest to the last stop first, for task paths that end at parking. */
  private readonly parkingNear: ParkingAfter = {
    spots: new Int32Array(3),
    find: (cell: number): number => freeParkingSpots(this.restSpots, this.context.distances, this.table, cell, this.parkingNear.spots),
  };

  step(tick: number, moves: Int32Array, turns?: Int8Array): number {
    const { world } = this.context;
    const robots = world.robotCount;
    const execution = this.execution;
    execution.beginStep(tick);
    this.accountHeldBack(tick);
    let justFreed = false;
    for (let r = 0; r < robots; r++) {
      const busy = world.robotTask[r] >= 0 ? 1 : 0;
      if (this.wasBusy[r] && !busy) justFreed = true;
      this.wasBusy[r] = busy;
    }
    if (tick >= this.nextEpoch || (this.options.assignOnFree && justFreed)) {
      if (tick >= this.nextEpoch) this.nextEpoch = (Math.floor(tick / this.epochTicks) + 1) * this.epochTicks;
      this.dispatch(tick);
    }
    let parkingPending = false;
    let idle = false;
    for (let r = 0; r < robots; r++) {
      if (world.robotPhase[r] === Phase.ToCharger && !world.robotBroken[r]) {
        if (!this.toCharger(r, tick)) parkingPending = true;
        continue;
      }
      // Idle robots, and robots queued for a charger (they go to rest but take no task).
      if (!world.restsLikeIdle(r)) continue;
      if (world.mayTakeTask(r)) idle = true;
      if (execution.pathEnd(r) > tick || this.isRestSpot[world.robotCell[r]]) continue;
      if (!this.park(r, tick)) parkingPending = true;
    }
    const following = execution.step(tick, moves, turns);
    this.countHeldBack();
    if (following) return tick + 1;
    // Nothing moves: wake at the next epoch while work and robots wait for each other.
    if ((idle && world.openTasks.length > 0) || parkingPending) return this.nextEpoch;
    return Infinity;
  }

  /**
   * One epoch: optimal assignment of free robots to open tasks, then prioritized planning.
   * Rounds: a robot whose task was blocked by the rest of a robot planned earlier in the
   * same round (two tasks for one drop) joins the next round, which re-solves the
   * assignment for the robots still free against the tasks still open. A robot whose
   * planning failed waits for the next epoch. At most one round per free robot.
   */
  private dispatch(tick: number): void {
    const { world, distances, tickSeconds } = this.context;
    if (world.openTasks.length === 0) return;
    let free: number[] = [];
    for (let r = 0; r < world.robotCount; r++) {
      if (world.mayTakeTask(r) && this.retryAt[r] <= tick) free.push(r);
    }
    if (free.length === 0) return;
    this.epochs++;
    while (free.length > 0 && world.openTasks.length > 0) {
      this.rounds++;
      const { pairs, candidates } = this.assigner.assign({
        world,
        distances,
        endRobot: this.table.endRobot,
        freeRobots: free,
        tick,
        tickSeconds,
        ageWeight: this.options.ageWeight,
        maxTasks: this.options.maxTasksPerEpoch,
        pickupQueueLimit: this.options.pickupQueueLimit,
      });
      this.candidateTasks += candidates;
      const blocked: number[] = [];
      for (const { robot, task } of pairs) {
        if (this.blockedByRest(robot, task)) {
          blocked.push(robot);
          continue;
        }
        const cell = world.robotCell[robot];
        const previous = this.remainingPath(robot, tick);
        this.table.release(robot, tick);
        const plan = planTask(this.planner, robot, cell, tick, task, this.options.restAt === 'parking' ? this.parkingNear : undefined);
        if (plan) {
          this.table.reserve(robot, plan.path, tick);
          world.assign(robot, task);
          this.wasBusy[robot] = 1;
          this.assigned++;
          this.failures[robot] = 0;
        } else {
          this.table.reserve(robot, previous, tick);
          this.failedPlans++;
          // Back off (1, 2, 4, 8 epochs): on a crowded floor the same plan keeps failing.
          this.failures[robot]++;
          this.retryAt[robot] = tick + this.epochTicks * Math.min(8, 2 ** (this.failures[robot] - 1));
        }
      }
      // The first pair of a round is never blocked (the candidates and costs exclude rests of
      // others), so every round assigns or drops a robot; the guard only makes that explicit.
      if (blocked.length === 0 || blocked.length === pairs.length) break;
      free = blocked.sort((a, b) => a - b);
    }
  }

  private blockedByRest(robot: number, task: number): boolean {
    const endRobot = this.table.endRobot;
    const count = taskEndpoints(this.context.world, task, this.endpoints);
    for (let e = 0; e < count; e++) {
      const rester = endRobot[this.endpoints[e]];
      if (rester >= 0 && rester !== robot) return true;
    }
    return false;
  }

  /**
   * The robot's reserved cells from `tick` on (its rest cell alone once the path ended).
   * Only the suffix is put back after a failed plan: re-writing past ticks into the ring
   * could overwrite another robot's reservation one horizon later.
   */
  private remainingPath(robot: number, tick: number): Int32Array {
    const path = this.table.paths[robot]!;
    const offset = tick - this.table.pathStart[robot];
    // A view, not a copy: reserved paths are never written to again.
    return offset < path.length ? path.subarray(offset) : path.subarray(path.length - 1);
  }

  /**
   * Plans robot r to the nearest free parking spot (trying the three nearest). Returns false
   * while a spot is free but no plan was found (retried at the next epoch, so a congested
   * floor does not cost three failed searches every tick); true otherwise (parked, or no
   * spot free: it stays put until the open list or the reservations change).
   */
  private park(robot: number, tick: number): boolean {
    const { world, distances } = this.context;
    const table = this.table;
    if (tick < this.parkRetryTick[robot]) return false;
    if (this.parkTriedVersion[robot] === world.version && this.parkTriedRevision[robot] === table.revision) return true;
    const cell = world.robotCell[robot];
    const spots = this.spotBuffer;
    const count = freeParkingSpots(this.restSpots, distances, table, cell, spots);
    if (count === 0) {
      this.parkTriedVersion[robot] = world.version;
      this.parkTriedRevision[robot] = table.revision;
      return true;
    }
    table.release(robot, tick);
    for (let i = 0; i < count; i++) {
      const path = planRest(this.planner, robot, cell, tick, spots[i]);
      if (path) {
        table.reserve(robot, path, tick);
        return true;
      }
    }
    table.rest(robot, cell, tick);
    this.parkFailures++;
    this.parkRetryTick[robot] = this.nextEpoch;
    return false;
  }

  /**
   * Robot r, sent to a charger by the engine, rests on it: replanned from where it stands
   * unless its path already ends there. False while the plan failed (retried next epoch).
   */
  private toCharger(robot: number, tick: number): boolean {
    const { world } = this.context;
    const charger = world.goalOf(robot);
    const path = this.table.paths[robot];
    if (path && path[path.length - 1] === charger) return true;
    if (tick < this.parkRetryTick[robot]) return false;
    const previous = this.remainingPath(robot, tick);
    this.table.release(robot, tick);
    const plan = planRest(this.planner, robot, world.robotCell[robot], tick, charger);
    if (plan) {
      this.table.reserve(robot, plan, tick);
      return true;
    }
    this.table.reserve(robot, previous, tick);
    this.failedPlans++;
    this.parkRetryTick[robot] = this.nextEpoch;
    return false;
  }

  /** A robot may be stopped (a breakdown) once its reserved path has ended: it rests there and no other path crosses it. */
  canStop(robot: number, tick: number): boolean {
    return this.execution.pathEnd(robot) <= tick;
  }

  /** Adds the task-ticks held back since the last step. */
  private accountHeldBack(tick: number): void {
    if (tick > this.heldBackSince) {
      this.heldBackTicks += this.heldBack * (tick - this.heldBackSince);
      this.heldBackSince = tick;
    }
  }

  /** Open tasks held back by the policy's rules right now (see heldBack). */
  private countHeldBack(): void {
    const world = this.context.world;
    const limit = this.options.pickupQueueLimit;
    const open = world.openTasks;
    if (open.length === 0 || (limit === 0 && this.options.restAt === 'parking')) {
      this.heldBack = 0;
      return;
    }
    const bound = this.boundForPickup;
    const pickupCells = this.pickupCells;
    for (let i = 0; i < pickupCells.length; i++) bound[pickupCells[i]] = 0;
    for (let r = 0; r < world.robotCount; r++) if (world.robotPhase[r] === phaseToPickup) bound[world.taskPickup[world.robotTask[r]]]++;
    let held = 0;
    if (this.options.restAt === 'drop') {
      // Paths end on drops: a task is also held while a robot rests on one of its endpoints.
      const endRobot = this.table.endRobot;
      for (let i = 0; i < open.length; i++) {
        const task = open[i];
        const pickup = world.taskPickup[task];
        const back = world.taskReturn[task];
        if ((limit > 0 && bound[pickup] >= limit) || endRobot[pickup] >= 0 || endRobot[world.taskDrop[task]] >= 0 || (back >= 0 && endRobot[back] >= 0)) held++;
      }
    } else {
      // Only full queues hold tasks back: their open tasks, from the world's per-pickup count
      // (a scan of the open list whenever it changed was 6% of the 200-robot bench row).
      const openAt = world.openAtPickup;
      for (let i = 0; i < pickupCells.length; i++) {
        const c = pickupCells[i];
        if (bound[c] >= limit) held += openAt[c];
      }
    }
    this.heldBack = held;
  }

  counters(): Record<string, number> {
    // Up to the end of the run: nothing changes the count after the last step.
    this.accountHeldBack(this.context.world.currentTick);
    return {
      heldBackTaskSeconds: this.heldBackTicks * this.context.tickSeconds,
      restCells: this.restSpots.length - this.context.layout.parking.length,
      epochs: this.epochs,
      rounds: this.rounds,
      candidateTasks: this.candidateTasks,
      assigned: this.assigned,
      failedPlans: this.failedPlans,
      parkFailures: this.parkFailures,
      searches: this.planner.search.searches,
      expansions: this.planner.search.expansions,
      ...(this.execution.dependent ? { dependencyWaits: this.execution.dependencyWaits, dependencyWaitSeconds: this.execution.dependencyWaitTicks * this.context.tickSeconds } : {}),
    };
  }
}
