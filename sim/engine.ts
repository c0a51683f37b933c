/**
 * One replication of a scenario: the discrete-event loop, the executor, the validator hook,
 * the deadlock detector and the conservation check.
 *
 * Events (kind, priority within a tick): motion (positions at t), handling done, task
 * release, operator recovery, policy wake-up, deadlock check, end of run. A motion event is
 * scheduled only while some robot moves or the policy asks for the next tick, so idle
 * stretches (night shifts, low demand) cost one event, not one tick each.
 *
 * Random streams: one seedrandom stream per purpose (arrivals, pickup choice, drop choice,
 * handling times, policy, delays), each seeded from (seed, replication, purpose), so two
 * policies run on one seed see the same task stream (common random numbers). Handling
 * times are drawn when a task is released, in release order, for the same reason.
 *
 * Turning (`units.turnSeconds`, sim/headings.ts): robots drive forward only. A policy turns
 * a standing robot by writing its new heading into `turns` at a step; the engine holds it
 * on its cell for the quarter turns x turn ticks, and the validator counts as illegal a
 * step against a robot's heading or before its turn ended, and a turn the engine refuses
 * (while handling, moving or held). The engine never delays a move on its own: a policy
 * that forgets a turn fails the run.
 *
 * Execution delays (`faults.delays`, sim/move-delays.ts): after the policy's step, every
 * robot that starts a move draws whether the move is held back; a held robot stays on its
 * cell for the delay (fixed, like a handling robot: `world.isFixed`), and the policy is
 * asked again at the same tick with the held robots fixed, so that it moves no other robot
 * into their cells (planned policies keep their robots' passing order through an action
 * dependency graph, sim/plan-execution.ts). Robots already drawn at this tick are not drawn
 * again.
 */
import seedrandom from 'seedrandom';
import type { Scenario } from './model.ts';
import { tickSecondsOf } from './model.ts';
import { CellKind, type Layout } from './layout.ts';
import type { DistanceTables } from './distance-table.ts';
import { EventQueue } from './event-queue.ts';
import { unreachable } from './distance-table.ts';
import { World, Phase, TaskState, isHandling, isLoaded, type TaskStateCounts } from './world.ts';
import type { Policy, PolicyFactory } from './policy.ts';
import { CollisionValidator } from './validator.ts';
import { MetricsRecorder, type RecordedMetrics } from './metrics.ts';
import { DeadlockDetector, PhaseCode } from './deadlock-detector.ts';
import { ArrivalProcess, makePointChooser } from './demand.ts';
import { StationHandling } from './station-handling.ts';
import { Upkeep, UpkeepCategory } from './upkeep.ts';
import type { RecordedUpkeepMetrics } from './upkeep-metrics.ts';
import { TaskTiming, type RecordedTaskTiming } from './task-timing.ts';
import { RunError } from './errors.ts';
import { restSpotsForFleet } from './rest-cells.ts';
import { initialHeading, quarterTurns, turnTicksOf } from './headings.ts';
import { MoveDelays } from './move-delays.ts';

// Read once: imported bindings are getters under the TypeScript loader (measured: 4-6% of a
// token-passing run went to them), and these are read per robot per tick.
const handlingPhase = isHandling;
const loadedPhase = isLoaded;

/** Event kinds, also their priority within a tick (a const enum: numbers in the code, no load per event). */
const enum EventKind {
  Motion = 0,
  HandlingDone = 1,
  Release = 2,
  Recover = 3,
  Wake = 4,
  Check = 5,
  Upkeep = 6,
  End = 7,
}

/** Station groups: where work queues (pickups; pick stations in round trips), and drops. */
export const StationGroup = { Pickup: 0, Drop: 1 } as const;

export interface SimulationSetup {
  scenario: Scenario;
  layout: Layout;
  distances: DistanceTables;
  policy: PolicyFactory<any>;
  policyOptions: unknown;
}

/** Tasks in the world at the end of a replication, counted by state (sim/world.ts). */
export interface TaskCounts extends TaskStateCounts {
  released: number;
}

/**
 * Version of the ReplicationRecord shape. Records are plain data (no class instances) so
 * they cross worker threads; bump this when a field changes meaning.
 */
export const replicationRecordVersion = 1;

export interface ReplicationRecord {
  recordVersion: typeof replicationRecordVersion;
  replication: number;
  tickSeconds: number;
  cellMeters: number;
  /** Tick at which the replication ended: the run's length, or one tick after the last trace task was done. */
  endTick: number;
  /** The run's length in ticks as configured (`run.hours`). */
  plannedEndTick: number;
  metrics: RecordedMetrics;
  /** Station cells, in the order of the station arrays in `metrics`. */
  stationCells: Int32Array;
  /** StationGroup per station (same order). */
  stationGroups: Uint8Array;
  released: number;
  delivered: number;
  /** Released and not delivered at the end, counted by state (open + held + assigned + picked up). */
  open: number;
  /** The end-of-run tasks by state; `released` = open + held + assigned + pickedUp + delivered. */
  tasks: TaskCounts;
  /** Release ticks of the tasks not delivered at the end of the run, ascending: lead time of an unstable run counts their ages. */
  openTaskReleaseTicks: number[];
  /** Saturated demand: the depth the open-task pool reached (it grows while the policy leaves robots idle); null otherwise. */
  poolDepth: number | null;
  /** Saturated demand: the most the pool may grow to (robots + 64 x task endpoints, `capacityPoolDepth`); null otherwise. */
  poolMaxDepth: number | null;
  /** Trace demand: tasks of the trace released after the run's end (never released); null otherwise. */
  traceTasksNotReleased: number | null;
  /** Trace demand: the run ended when the last task was done (delivered; round trips: shelf returned), before `run.hours`. */
  endedAtLastTraceDelivery: boolean;
  collisions: number;
  vertexCollisions: number;
  swapCollisions: number;
  illegalSteps: number;
  collisionExamples: string[];
  /** Robots x simulated ticks: one agent-step is one robot over one tick, moved or not. */
  agentSteps: number;
  motionTicks: number;
  events: number;
  policyCounters: Record<string, number>;
  /** Shelves at storage + on robots at the end (round trips); equals the storage count. */
  shelvesAccounted: number;
  /** Shelves standing on their storage points at the end (round trips). */
  shelvesAtStorage: number;
  /** Turning and execution delays; null when the scenario has neither (robots turn in no time, no delays). */
  execution: ExecutionRecord | null;
  /** Wall-clock figures: the only part of a record that differs between identical runs. */
  timing: { wallSeconds: number; planningSeconds: number };
  /** Lead-time parts and the hourly profile of delivered tasks (sim/task-timing.ts). */
  taskTiming: RecordedTaskTiming;
  /** Charging and breakdowns (sim/upkeep-metrics.ts); null when the scenario has neither. */
  upkeep: UpkeepRecord | null;
}

export interface UpkeepRecord {
  metrics: RecordedUpkeepMetrics;
  /** Charger cells, in the order of the charger arrays in `metrics`. */
  chargerCells: Int32Array;
  /** Robots whose charge reached 0 at least once. */
  ranFlatRobots: number;
}

/** Whole-run counts of turning in place and of held-back moves. */
export interface ExecutionRecord {
  /** Ticks of one quarter turn (0: robots turn in no time). */
  turnTicks: number;
  /** Quarter turns the robots made. */
  quarterTurns: number;
  /** Moves started (each drew whether it is held back); 0 without delays. */
  moveAttempts: number;
  /** Moves held back, and the robot-ticks they were held. */
  heldMoves: number;
  heldTicks: number;
}

export interface ReplicationHooks {
  /** Called now and then with the fraction of simulated time done. */
  progress?: (fraction: number) => void;
  /** Called after every executed motion tick (tests use it to watch positions). */
  afterMotion?: (tick: number, world: World) => void;
}

export function streamFor(seed: number, replication: number, purpose: string): () => number {
  return seedrandom(`fleetwright/${seed}/${replication}/${purpose}`);
}

/**
 * The open-task pool of saturated demand (a capacity run). It starts at one task per robot
 * plus one per task endpoint of the floor (pickup and drop points; storage and pick
 * stations in round trips). A policy may not take every open task (token passing skips a
 * task whose pickup or drop ends another robot's path), so a fixed pool can leave robots
 * idle that could work: after every policy step that leaves robots without a task while
 * the pool is full, the pool grows by one task per such robot, up to `maxDepth`. A policy
 * that uses every robot keeps the starting depth (little room to pick short tasks); one
 * whose rules bar tasks gets the choice it needs. Every released task stays in the pool
 * until taken, so over a run the tasks served follow the demand's mix up to the pool's
 * depth; the report shows the mean loaded distance of served tasks beside released ones.
 */
export function capacityPoolDepth(robots: number, layout: Layout, roundTrip: boolean): { startDepth: number; maxDepth: number } {
  const endpoints = (roundTrip ? layout.storage.length : layout.pickups.length) + layout.drops.length;
  return { startDepth: robots + endpoints, maxDepth: robots + 64 * endpoints };
}

export function runReplication(setup: SimulationSetup, replication: number, hooks: ReplicationHooks = {}): ReplicationRecord {
  const wallStart = performance.now();
  const { scenario, layout, distances } = setup;
  const tickSeconds = tickSecondsOf(scenario);
  const run = scenario.run;
  const plannedEndTick = Math.max(1, Math.round((run.hours * 3600) / tickSeconds));
  let endTick = plannedEndTick;
  const intervalTicks = Math.max(1, Math.round(run.sampleSeconds / tickSeconds));
  const deadlockTicks = Math.max(1, Math.round(run.deadlockSeconds / tickSeconds));
  const recoveryTicks = Math.round(run.recoverySeconds / tickSeconds);
  const robots = scenario.fleet.robots;
  const demand = scenario.demand;
  const roundTrip = demand.mode === 'round-trip';

  // Stations: pickup and drop points in delivery mode; pick stations (D) in round trips.
  const stationOf = new Int32Array(layout.cellCount).fill(-1);
  const stationCellsList: number[] = [];
  const stationGroupList: number[] = [];
  for (let c = 0; c < layout.cellCount; c++) {
    const kind = layout.kind[c];
    const group = kind === CellKind.Drop ? (roundTrip ? StationGroup.Pickup : StationGroup.Drop) : kind === CellKind.Pickup && !roundTrip ? StationGroup.Pickup : -1;
    if (group < 0) continue;
    stationOf[c] = stationCellsList.length;
    stationCellsList.push(c);
    stationGroupList.push(group);
  }
  const stationCells = Int32Array.from(stationCellsList);
  const stationGroups = Uint8Array.from(stationGroupList);
  const metrics = new MetricsRecorder(intervalTicks, endTick, stationCells.length, robots, layout.cellCount);
  /** The station where a task's work queues: its pickup, or its pick station in a round trip. */
  const workStation = (pickup: number, drop: number): number => stationOf[roundTrip ? drop : pickup];

  const world = new World(layout, robots);
  placeRobots(world, layout);
  const validator = new CollisionValidator(layout, world.robotCell);
  // Forward-only robots (turning takes time) and held-back moves, when the scenario has them.
  const turnTicks = turnTicksOf(scenario.units.turnSeconds, tickSeconds);
  world.turnTicks = turnTicks;
  if (turnTicks > 0) {
    world.robotHeading.fill(initialHeading);
    validator.enableHeadings(initialHeading);
  }
  const delaySpec = scenario.faults?.delays;
  const moveDelays = delaySpec ? new MoveDelays(delaySpec, tickSeconds, streamFor(run.seed, replication, 'delays')) : null;
  world.movesMayBeHeld = moveDelays !== null;
  let quarterTurnCount = 0;

  // Random streams, one per purpose.
  const seed = run.seed;
  const arrivalStream = streamFor(seed, replication, 'arrivals');
  const pickupStream = streamFor(seed, replication, 'pickups');
  const dropStream = streamFor(seed, replication, 'drops');
  const handlingStream = streamFor(seed, replication, 'handling');
  const policyStream = streamFor(seed, replication, 'policy');

  const handlingAt = new StationHandling(scenario.handling, tickSeconds);
  const taskTiming = new TaskTiming(intervalTicks, endTick, Math.max(1, Math.round(3600 / tickSeconds)));
  const pickupCells = roundTrip ? layout.storage : layout.pickups;
  const choosePickup = demand.kind === 'trace' ? null : makePointChooser(pickupCells, demand.pickups);
  const chooseDrop = demand.kind === 'trace' ? null : makePointChooser(layout.drops, demand.drops);
  // Loaded distance of a task, read from the table of the endpoint kind with fewer cells
  // (pickups in delivery mode, pick stations in round trips), which policies build anyway.
  const loadedCells = (pickup: number, drop: number): number => {
    const d = roundTrip ? distances.to(drop)[pickup] : distances.to(pickup)[drop];
    return d >= unreachable ? 0 : roundTrip ? 2 * d : d;
  };

  // Round trips: one shelf per storage point; tasks for a shelf that is away are held in FIFO order.
  const shelfHome = new Uint8Array(layout.cellCount);
  for (const c of layout.storage) shelfHome[c] = 1;
  const shelfQueue = new Map<number, number[]>();
  const shelfBusy = new Uint8Array(layout.cellCount);
  let shelvesOnRobots = 0;
  let heldTasks = 0;

  const queue = new EventQueue();
  let released = 0;
  let delivered = 0;
  let deliveredThisTick = false;
  let tick = 0;
  let policyDirty = true;
  let motionScheduledFor = -1;
  let checkScheduledFor = -1;
  let events = 0;

  const releaseTask = (t: number, pickup: number, drop: number): void => {
    const pickupTicks = handlingAt.pickup(pickup)(handlingStream);
    const dropTicks = handlingAt.drop(drop)(handlingStream);
    const returnTicks = roundTrip ? handlingAt.pickup(pickup)(handlingStream) : 0;
    let state: number = TaskState.Open;
    if (roundTrip) {
      if (shelfBusy[pickup]) state = TaskState.Held;
      else shelfBusy[pickup] = 1;
    }
    const id = world.addTask(t, pickup, drop, roundTrip ? pickup : -1, pickupTicks, dropTicks, returnTicks, state);
    if (state === TaskState.Held) {
      let list = shelfQueue.get(pickup);
      if (!list) shelfQueue.set(pickup, (list = []));
      list.push(id);
      heldTasks++;
    }
    released++;
    metrics.released(t, loadedCells(pickup, drop));
    taskTiming.released(t);
    // Both endpoints, pickup first (no list per release).
    if (stationOf[pickup] >= 0) metrics.stationTaskReleased(stationOf[pickup]);
    if (stationOf[drop] >= 0) metrics.stationTaskReleased(stationOf[drop]);
    const ws = workStation(pickup, drop);
    if (ws >= 0) metrics.stationWorkChange(ws, t, 1, 0);
    policyDirty = true;
  };

  const newRandomTask = (t: number): void => {
    releaseTask(t, choosePickup!(pickupStream), chooseDrop!(dropStream));
  };

  world.onAssign = (task) => {
    const ws = workStation(world.taskPickup[task], world.taskDrop[task]);
    if (ws >= 0) metrics.stationWorkChange(ws, world.currentTick, -1, 1);
  };
  world.onUnassign = (task) => {
    const ws = workStation(world.taskPickup[task], world.taskDrop[task]);
    if (ws >= 0) metrics.stationWorkChange(ws, world.currentTick, 1, -1);
  };

  // Demand ------------------------------------------------------------------------
  let arrivals: ArrivalProcess | null = null;
  let traceIndex = 0;
  let traceTasksNotReleased: number | null = null;
  let poolDepth: number | null = null;
  let poolMaxDepth: number | null = null;
  /** Saturated demand: grows the pool when the last policy step left robots idle; true when it did. */
  let deepenPool: ((t: number) => boolean) | null = null;
  const secondsToTick = (s: number) => Math.floor(s / tickSeconds + 1e-9);
  if (demand.kind === 'poisson') {
    arrivals = new ArrivalProcess(demand.tasksPerHour, demand.profile);
    const first = secondsToTick(arrivals.next(arrivalStream));
    if (first < endTick) queue.schedule(first, EventKind.Release, EventKind.Release);
  } else if (demand.kind === 'trace') {
    traceTasksNotReleased = 0;
    for (const task of demand.tasks) if (secondsToTick(task.releaseSeconds) >= endTick) traceTasksNotReleased++;
    if (demand.tasks.length > 0) {
      const first = secondsToTick(demand.tasks[0].releaseSeconds);
      if (first < endTick) queue.schedule(first, EventKind.Release, EventKind.Release);
    }
  } else {
    // Saturated demand keeps a pool of released, unassigned tasks (open or held) at a fixed
    // depth: every assignment releases the next, unless a task taken back by a swap already
    // refilled it.
    const rule = capacityPoolDepth(robots, layout, roundTrip);
    poolDepth = rule.startDepth;
    poolMaxDepth = rule.maxDepth;
    const topUp = (t: number) => {
      while (world.openTasks.length + heldTasks < poolDepth!) newRandomTask(t);
    };
    topUp(0);
    const countAssignment = world.onAssign;
    world.onAssign = (task, robot) => {
      countAssignment(task, robot);
      topUp(world.currentTick);
    };
    deepenPool = (t: number): boolean => {
      if (poolDepth! >= rule.maxDepth || world.openTasks.length + heldTasks < poolDepth!) return false;
      // world.mayTakeTask per robot, read from the arrays (this runs at every step of a capacity run).
      const phases = world.robotPhase;
      const robotTask = world.robotTask;
      const broken = world.robotBroken;
      const stopPending = world.robotStopPending;
      let idle = 0;
      for (let r = 0; r < robots; r++) if (phases[r] === PhaseCode.Idle && robotTask[r] < 0 && broken[r] === 0 && stopPending[r] === 0) idle++;
      if (idle === 0) return false;
      poolDepth = Math.min(rule.maxDepth, poolDepth! + idle);
      topUp(t);
      return true;
    };
  }

  // Phases ------------------------------------------------------------------------
  const handlingTicksFor = (robot: number): number => {
    const task = world.robotTask[robot];
    const phase = world.robotPhase[robot];
    if (phase === Phase.ToPickup) return world.taskPickupTicks[task];
    if (phase === Phase.ToDrop) return world.taskDropTicks[task];
    return world.taskReturnTicks[task];
  };

  const startHandling = (robot: number, t: number): void => {
    const h = handlingTicksFor(robot);
    const cell = world.robotCell[robot];
    const phase = world.robotPhase[robot];
    world.robotPhase[robot] = phase + 1; // To* -> Handling*
    world.robotHandlingUntil[robot] = t + h;
    const s = stationOf[cell];
    if (s >= 0) {
      // The robot reached the station where its work queues: no longer travelling to it.
      const task = world.robotTask[robot];
      if (s === workStation(world.taskPickup[task], world.taskDrop[task]) && phase === (roundTrip ? Phase.ToDrop : Phase.ToPickup)) metrics.stationWorkChange(s, t, 0, -1);
      metrics.stationBusyChange(s, t, true);
    }
    if (h === 0) finishHandling(robot, t);
    else queue.schedule(t + h, EventKind.HandlingDone, EventKind.HandlingDone, robot);
  };

  const arriveIfAtGoal = (robot: number, t: number): void => {
    const goal = world.goalOf(robot);
    if (goal >= 0 && world.robotCell[robot] === goal) arrive(robot, t);
  };
  /** A robot reached its goal: a task stop starts handling, a charger starts charging. */
  const arrive = (robot: number, t: number): void => {
    if (world.robotPhase[robot] === Phase.ToCharger) upkeep!.arrived(robot, t);
    else startHandling(robot, t);
  };
  world.onArrive = (robot) => startHandling(robot, world.currentTick);

  const finishHandling = (robot: number, t: number): void => {
    const task = world.robotTask[robot];
    const cell = world.robotCell[robot];
    const s = stationOf[cell];
    if (s >= 0) metrics.stationBusyChange(s, t, false);
    detector.served(cell, t);
    const phase = world.robotPhase[robot];
    policyDirty = true;
    if (phase === Phase.HandlingPickup) {
      world.markPickedUp(task, t);
      if (roundTrip) {
        shelfHome[cell] = 0;
        shelvesOnRobots++;
      }
      world.robotPhase[robot] = Phase.ToDrop;
      arriveIfAtGoal(robot, t);
    } else if (phase === Phase.HandlingDrop) {
      world.markDelivered(task, t);
      delivered++;
      deliveredThisTick = true;
      metrics.delivered(t, world.taskRelease[task], loadedCells(world.taskPickup[task], world.taskDrop[task]));
      taskTiming.delivered(t, world.taskRelease[task], world.taskAssignedTick[task], world.taskPickedTick[task], world.taskPickupTicks[task], world.taskDropTicks[task]);
      if (roundTrip) {
        world.robotPhase[robot] = Phase.ToReturn;
        arriveIfAtGoal(robot, t);
      } else {
        world.robotTask[robot] = -1;
        world.robotPhase[robot] = Phase.Idle;
        world.retire(task);
        world.version++;
      }
      checkConservation(t);
      endTraceIfDone(t);
    } else if (phase === Phase.HandlingReturn) {
      shelfHome[cell] = 1;
      shelvesOnRobots--;
      world.robotTask[robot] = -1;
      world.robotPhase[robot] = Phase.Idle;
      world.retire(task);
      world.version++;
      const list = shelfQueue.get(cell);
      if (list && list.length > 0) {
        const next = list.shift()!;
        heldTasks--;
        world.releaseHeld(next);
      } else {
        shelfBusy[cell] = 0;
      }
      endTraceIfDone(t);
    }
  };

  // A trace whose every task is done (delivered; in round trips, its shelf back in place)
  // ends the run there, so throughput is measured over the trace's span.
  const endTraceIfDone = (t: number): void => {
    if (demand.kind !== 'trace' || traceIndex < demand.tasks.length || world.retired < demand.tasks.length || t + 1 >= endTick) return;
    endTick = t + 1;
    queue.schedule(endTick, EventKind.End, EventKind.End);
  };

  // Conservation, counted by state (DESIGN §2: released = delivered + in flight + waiting):
  // waiting from the open list and the shelf queues, in flight from what each robot holds,
  // delivered from the world's retired slots plus round trips still returning their shelf.
  // Every slot's stored state is recounted by a full scan every 256 checks and at the end.
  let checks = 0;
  const countByHolders = (): TaskCounts => {
    let assigned = 0;
    let pickedUp = 0;
    let returning = 0;
    for (let r = 0; r < robots; r++) {
      const task = world.robotTask[r];
      if (task < 0) continue;
      const state = world.taskState[task];
      if (world.taskRobot[task] !== r) throw new RunError(`conservation broken: robot ${r} holds task ${task}, which names robot ${world.taskRobot[task]}`);
      if (state === TaskState.Assigned) assigned++;
      else if (state === TaskState.PickedUp) pickedUp++;
      else if (state === TaskState.Delivered) returning++;
      else throw new RunError(`conservation broken: robot ${r} holds task ${task} in state ${state}`);
    }
    return { released, open: world.openTasks.length, held: heldTasks, assigned, pickedUp, delivered: world.retired + returning };
  };
  const checkConservation = (t: number): TaskCounts => {
    const counts = countByHolders();
    const total = counts.open + counts.held + counts.assigned + counts.pickedUp + counts.delivered;
    if (released !== total || counts.delivered !== delivered) {
      throw new RunError(
        `conservation broken at tick ${t}: released ${released} != open ${counts.open} + held ${counts.held} + assigned ${counts.assigned} + picked up ${counts.pickedUp} + delivered ${counts.delivered} (deliveries counted: ${delivered})`,
      );
    }
    if ((checks++ & 255) === 0 || t >= endTick) {
      const stored = world.countTasksByState();
      for (const key of ['open', 'held', 'assigned', 'pickedUp', 'delivered'] as const) {
        if (stored[key] !== counts[key]) throw new RunError(`conservation broken at tick ${t}: ${stored[key]} task slots are ${key}, but the lists and robots hold ${counts[key]}`);
      }
      for (const task of world.openTasks) if (world.taskState[task] !== TaskState.Open) throw new RunError(`conservation broken at tick ${t}: task ${task} in the open list has state ${world.taskState[task]}`);
    }
    if (roundTrip) {
      let home = 0;
      for (const c of layout.storage) home += shelfHome[c];
      if (home + shelvesOnRobots !== layout.storage.length) {
        throw new RunError(`shelf count broken at tick ${t}: ${home} at storage + ${shelvesOnRobots} on robots != ${layout.storage.length}`);
      }
    }
    return counts;
  };

  // Deadlocks, livelocks, gridlock and station queues (sim/deadlock-detector.ts).
  const detector = new DeadlockDetector(layout, distances, robots, deadlockTicks, stationOf, stationCells.length, (s, t, n) => metrics.stationQueueSet(s, t, n));
  const recover = (episodeId: number, t: number): void => {
    // The operator leaves one robot of the jam (the lowest-numbered) in place and drives the
    // others to parking, so the one left can go on; clearing every robot to parking can
    // rebuild the same head-on jam when they set out again.
    const members = detector.activeMembers(episodeId);
    if (members.length === 0) return;
    for (const r of members.slice(members.length > 1 ? 1 : 0)) {
      if (world.robotBroken[r]) continue; // a broken robot waits for its repair where it stands
      const target = nearestFreeParking(world, layout, distances, world.robotCell[r]);
      if (target < 0) continue;
      const from = world.robotCell[r];
      world.occupant[from] = -1;
      world.robotCell[r] = target;
      world.occupant[target] = r;
      validator.relocate(r, target);
      detector.relocated(r, t);
      policy.onRelocated?.(r, t);
      arriveIfAtGoal(r, t);
    }
    policyDirty = true;
    // A robot left in place that still makes no progress is cleared at the next visit.
    if (detector.activeMembers(episodeId).length > 0) queue.schedule(t + recoveryTicks, EventKind.Recover, EventKind.Recover, episodeId);
  };

  // Policy ------------------------------------------------------------------------------
  const policy: Policy = setup.policy.create(
    { world, layout, distances, tickSeconds, random: policyStream },
    setup.policyOptions as never,
  );
  // Charging and breakdowns, only when the scenario has them (nothing changes otherwise).
  const upkeep = Upkeep.needed(scenario)
    ? new Upkeep(scenario, world, layout, distances, tickSeconds, intervalTicks, endTick, (r) => streamFor(seed, replication, `breakdowns/${r}`), {
        schedule: (at, robot, kind) => {
          if (at < endTick) queue.schedule(at, EventKind.Upkeep, EventKind.Upkeep, robot * 8 + kind);
        },
        progressed: (robot, t) => detector.restart(robot, t),
        canStop: (robot, t) => policy.canStop?.(robot, t) ?? true,
      })
    : null;
  const upkeepCategory = upkeep?.category ?? null;
  // Robots standing behind broken-down or charging robots: counted only when there can be any.
  if (upkeep !== null) detector.onBehindFixed = (t, n) => upkeep.metrics.behindFixedSet(t, n);
  const moves = new Int32Array(robots);
  const turns = new Int8Array(robots).fill(-1);
  /** Tick at which each robot last drew whether its move is held back (one draw per robot per tick). */
  const delayDrawnAt = new Int32Array(robots).fill(-1);
  const wantedCells = policy.wantedCells ?? null;
  let wantedFresh = false;
  let planningMs = 0;
  let motionTicks = 0;
  let accountedUntil = 0;

  /**
   * Execution delays: every robot that starts a move draws whether it is held back; while
   * some are, the policy decides again with them fixed (robots drawn at this tick keep
   * their draw). Returns the policy's last wanted tick.
   */
  const holdBackMoves = (t: number, wanted: number): number => {
    const cells = world.robotCell;
    for (;;) {
      let held = 0;
      for (let r = 0; r < robots; r++) {
        if (moves[r] === cells[r] || delayDrawnAt[r] === t || world.isFixed(r)) continue;
        delayDrawnAt[r] = t;
        const ticks = moveDelays!.draw();
        if (ticks === 0) continue;
        world.robotHeldUntil[r] = t + ticks;
        queue.schedule(t + ticks, EventKind.Wake, EventKind.Wake);
        held++;
      }
      if (held === 0) return wanted;
      for (let r = 0; r < robots; r++) moves[r] = cells[r];
      if (wantedCells) wantedCells.fill(-1);
      if (turnTicks > 0) turns.fill(-1);
      wanted = policy.step(t, moves, turns);
    }
  };

  /** Carries out the turns the policy asked for; refused ones (handling, held, moving, mid-turn) are illegal steps. */
  const applyTurns = (t: number): void => {
    for (let r = 0; r < robots; r++) {
      const heading = turns[r];
      if (heading < 0) continue;
      if (heading > 3) {
        validator.refused(r, t, `asked for heading ${heading} (expected 0-3)`);
        continue;
      }
      if (world.robotTurnUntil[r] > t) {
        if (heading !== world.robotHeading[r]) validator.refused(r, t, 'started a turn before its last one ended');
        continue;
      }
      if (handlingPhase(world.robotPhase[r]) || world.robotHeldUntil[r] > t) {
        validator.refused(r, t, handlingPhase(world.robotPhase[r]) ? 'turned while being loaded or unloaded' : 'turned while its move was held back');
        continue;
      }
      if (moves[r] !== world.robotCell[r]) {
        validator.refused(r, t, 'turned and moved in one step');
        continue;
      }
      const quarter = quarterTurns(world.robotHeading[r], heading);
      if (quarter === 0) continue;
      world.robotHeading[r] = heading;
      world.robotTurnUntil[r] = t + quarter * turnTicks;
      validator.turned(r, heading, t + quarter * turnTicks);
      quarterTurnCount += quarter;
    }
  };

  const accountStill = (from: number, to: number): void => {
    if (to <= from) return;
    let handling = 0;
    let waiting = 0;
    let parked = 0;
    let busy = 0;
    const cellWaiting = metrics.cellWaitingTicks;
    for (let r = 0; r < robots; r++) {
      if (world.robotTask[r] >= 0) busy++;
      // Charging and broken robots are counted by the upkeep's own recorder.
      if (upkeepCategory !== null && upkeepCategory[r] !== UpkeepCategory.None) continue;
      const phase = world.robotPhase[r];
      if (handlingPhase(phase)) handling++;
      else if (phase !== PhaseCode.Idle) {
        waiting++;
        cellWaiting[world.robotCell[r]] += to - from;
      } else parked++;
    }
    metrics.addStill(from, to, handling, waiting, parked, busy, world.openTasks.length > 0 ? parked : 0);
  };

  /** Robots that stand on their goal after a motion tick (ascending), arriving there. */
  const atGoal = new Int32Array(robots);
  const executeMotion = (t: number): void => {
    // Apply the moves decided at t-1; handling robots stay whatever the policy wrote. One
    // pass per robot: its move, its activity count, the occupancy, and whether it stands on
    // its goal (world.goalOf read from the arrays); arrivals are carried out after the step
    // is counted, in robot order (an arrival changes only its own robot).
    let loaded = 0;
    let empty = 0;
    let handling = 0;
    let waiting = 0;
    let parked = 0;
    let busy = 0;
    let arriving = 0;
    const cells = world.robotCell;
    const occupant = world.occupant;
    const phases = world.robotPhase;
    const robotTask = world.robotTask;
    const heldUntil = world.robotHeldUntil;
    const turnUntil = world.robotTurnUntil;
    const broken = world.robotBroken;
    const charger = world.robotCharger;
    const taskPickup = world.taskPickup;
    const taskDrop = world.taskDrop;
    const taskReturn = world.taskReturn;
    const cellWaiting = metrics.cellWaitingTicks;
    // Hold and turn clocks exist only with delays and turning (their arrays stay -1 otherwise).
    const holding = moveDelays !== null;
    const turning = turnTicks > 0;
    for (let r = 0; r < robots; r++) {
      const phase = phases[r];
      const task = robotTask[r];
      if (task >= 0) busy++;
      const from = cells[r];
      let to = from;
      if (upkeepCategory !== null && upkeepCategory[r] !== UpkeepCategory.None) {
        // Counted by the upkeep's own recorder. Broken and charging robots stay where they
        // are (and so does a robot whose move is held back); robots going to (or waiting
        // for) a charger move as the policy says.
        if (!world.isFixed(r) && (!holding || heldUntil[r] < t)) to = moves[r];
      } else if (handlingPhase(phase)) {
        handling++;
      } else {
        // A held-back move keeps the robot where it is, whatever the policy wrote (checked by tick: no call per robot).
        if (!holding || heldUntil[r] < t) to = moves[r];
        if (to === from) {
          if (turning && turnUntil[r] >= t) {
            // Turning in place is travel (Groover's cycle time counts it in the travel term).
            if (loadedPhase(phase)) loaded++;
            else empty++;
          } else if (phase === PhaseCode.Idle) parked++;
          else {
            waiting++;
            cellWaiting[from]++;
          }
        } else if (loadedPhase(phase)) loaded++;
        else empty++;
      }
      if (to !== from) {
        if (occupant[from] === r) occupant[from] = -1;
        cells[r] = to;
      }
      // Every robot marks its cell, so that the highest-numbered robot of a cell holds it (as a separate pass would).
      occupant[to] = r;
      const goal =
        phase === PhaseCode.ToPickup
          ? taskPickup[task]
          : phase === PhaseCode.ToDrop
            ? taskDrop[task]
            : phase === PhaseCode.ToReturn
              ? taskReturn[task]
              : phase === PhaseCode.ToCharger
                ? charger[r]
                : -1;
      if (goal >= 0 && to === goal && broken[r] === 0) atGoal[arriving++] = r;
    }
    validator.check(cells, t);
    metrics.addStep(t, loaded, empty, handling, waiting, parked, busy, world.openTasks.length > 0 ? parked : 0);
    motionTicks++;
    for (let i = 0; i < arriving; i++) arrive(atGoal[i], t);
    hooks.afterMotion?.(t, world);
  };

  // Main loop -------------------------------------------------------------------------
  queue.schedule(0, EventKind.Wake, EventKind.Wake);
  queue.schedule(endTick, EventKind.End, EventKind.End);
  upkeep?.start(0);
  const progressEvery = Math.max(1, Math.floor(endTick / 200));
  let nextProgress = progressEvery;
  let ended = false;
  while (!ended && queue.length > 0) {
    const t = queue.peekTick();
    if (t > tick) {
      const motionNext = queue.peekKind() === EventKind.Motion;
      accountStill(accountedUntil, motionNext ? t - 1 : t);
      accountedUntil = motionNext ? t - 1 : t;
      tick = t;
      world.currentTick = t;
      if (hooks.progress && t >= nextProgress) {
        hooks.progress(Math.min(1, t / plannedEndTick));
        nextProgress = t + progressEvery;
      }
    }
    while (queue.length > 0 && queue.peekTick() === tick) {
      queue.pop();
      events++;
      const kind = queue.lastKind;
      switch (kind) {
        case EventKind.Motion:
          executeMotion(tick);
          accountedUntil = tick;
          policyDirty = true;
          break;
        case EventKind.HandlingDone: {
          const r = queue.lastPayload;
          if (isHandling(world.robotPhase[r]) && world.robotHandlingUntil[r] === tick) finishHandling(r, tick);
          break;
        }
        case EventKind.Release:
          if (demand.kind === 'poisson') {
            newRandomTask(tick);
            const next = secondsToTick(arrivals!.next(arrivalStream));
            if (next < endTick) queue.schedule(next, EventKind.Release, EventKind.Release);
          } else if (demand.kind === 'trace') {
            const task = demand.tasks[traceIndex++];
            releaseTask(tick, task.pickup, task.drop);
            if (traceIndex < demand.tasks.length) {
              const next = secondsToTick(demand.tasks[traceIndex].releaseSeconds);
              if (next < endTick) queue.schedule(next, EventKind.Release, EventKind.Release);
            }
          }
          break;
        case EventKind.Recover:
          recover(queue.lastPayload, tick);
          break;
        case EventKind.Wake:
          policyDirty = true;
          break;
        case EventKind.Check:
          break;
        case EventKind.Upkeep: {
          const payload = queue.lastPayload;
          if (upkeep!.handle(payload >> 3, payload & 7, tick)) policyDirty = true;
          break;
        }
        case EventKind.End:
          ended = tick >= endTick;
          break;
      }
    }
    if (ended) break;
    let anyMove = false;
    let wanted = Infinity;
    if (policyDirty) {
      policyDirty = false;
      upkeep?.beforePolicy(tick);
      moves.set(world.robotCell);
      if (wantedCells) wantedCells.fill(-1);
      if (turnTicks > 0) turns.fill(-1);
      const planStart = performance.now();
      wanted = policy.step(tick, moves, turns);
      if (moveDelays !== null) wanted = holdBackMoves(tick, wanted);
      planningMs += performance.now() - planStart;
      wantedFresh = wantedCells !== null;
      if (turnTicks > 0) applyTurns(tick);
      const cells = world.robotCell;
      const turnUntil = world.robotTurnUntil;
      for (let r = 0; r < robots; r++) {
        if ((moves[r] !== cells[r] && !world.isFixed(r)) || turnUntil[r] > tick) {
          anyMove = true;
          break;
        }
      }
      if ((anyMove || wanted <= tick + 1) && motionScheduledFor !== tick + 1) {
        queue.schedule(tick + 1, EventKind.Motion, EventKind.Motion);
        motionScheduledFor = tick + 1;
      } else if (!anyMove && wanted > tick + 1 && Number.isFinite(wanted)) {
        queue.schedule(wanted, EventKind.Wake, EventKind.Wake);
      }
      // Capacity runs: robots left idle with the pool full get more tasks to choose from next tick.
      if (deepenPool !== null && deepenPool(tick) && motionScheduledFor !== tick + 1) queue.schedule(tick + 1, EventKind.Wake, EventKind.Wake);
    } else {
      wantedFresh = false;
    }
    // The step [tick, tick + 1): robots go where the policy sent them if a motion tick follows.
    const moving = motionScheduledFor === tick + 1;
    const outcome = detector.evaluate(tick, world, moving ? moves : world.robotCell, wantedFresh ? wantedCells : null, deliveredThisTick);
    deliveredThisTick = false;
    if (setup.policy.allowsRecovery && recoveryTicks > 0) {
      for (const id of outcome.clearable) queue.schedule(tick + recoveryTicks, EventKind.Recover, EventKind.Recover, id);
    }
    if (!moving) {
      // Nothing moves for a while: make sure a stall is still noticed when it has lasted.
      const check = detector.nextCheckTick(world);
      if (check < endTick && check > tick && checkScheduledFor !== check && check < queue.peekTick()) {
        queue.schedule(check, EventKind.Check, EventKind.Check);
        checkScheduledFor = check;
      }
    }
  }
  metrics.truncate(endTick);
  accountStill(accountedUntil, endTick);
  metrics.finish();
  upkeep?.metrics.finish(endTick);
  for (const episode of detector.finish(endTick)) metrics.episodes.push(episode);
  const counts = checkConservation(endTick);
  const openTaskReleaseTicks: number[] = [];
  for (let task = 0; task < world.taskCount; task++) {
    const state = world.taskState[task];
    if (state !== TaskState.Free && state !== TaskState.Delivered) openTaskReleaseTicks.push(world.taskRelease[task]);
  }
  openTaskReleaseTicks.sort((a, b) => a - b);
  let home = 0;
  for (const c of layout.storage) home += shelfHome[c];

  return {
    recordVersion: replicationRecordVersion,
    replication,
    tickSeconds,
    cellMeters: scenario.units.cellMeters,
    endTick,
    plannedEndTick,
    metrics: metrics.toRecorded(),
    stationCells,
    stationGroups,
    released,
    delivered,
    open: counts.open + counts.held + counts.assigned + counts.pickedUp,
    tasks: counts,
    openTaskReleaseTicks,
    poolDepth,
    poolMaxDepth,
    traceTasksNotReleased,
    endedAtLastTraceDelivery: endTick < plannedEndTick,
    collisions: validator.collisions,
    vertexCollisions: validator.vertexCollisions,
    swapCollisions: validator.swapCollisions,
    illegalSteps: validator.illegalSteps,
    collisionExamples: validator.examples,
    agentSteps: robots * endTick,
    motionTicks,
    events,
    policyCounters: policy.counters?.() ?? {},
    shelvesAccounted: home + shelvesOnRobots,
    shelvesAtStorage: home,
    execution:
      turnTicks > 0 || moveDelays !== null
        ? {
            turnTicks,
            quarterTurns: quarterTurnCount,
            moveAttempts: moveDelays?.attempts ?? 0,
            heldMoves: moveDelays?.heldMoves ?? 0,
            heldTicks: moveDelays?.heldTicks ?? 0,
          }
        : null,
    timing: { wallSeconds: (performance.now() - wallStart) / 1000, planningSeconds: planningMs / 1000 },
    taskTiming: taskTiming.toRecorded(),
    upkeep: upkeep === null ? null : { metrics: upkeep.metrics.toRecorded(), chargerCells: layout.chargers, ranFlatRobots: upkeep.ranFlatRobots.size },
  };
}

/**
 * Robots start on parking spots in reading order, then on the fleet's rest cells
 * (sim/rest-cells.ts, when there are more robots than spots), then on floor cells in
 * reading order. Starting on rest cells keeps a floor that is well-formed with its rest
 * cells well-formed from the first tick, instead of packing the extra robots into the aisles.
 */
export function placeRobots(world: World, layout: Layout): void {
  let r = 0;
  for (const c of restSpotsForFleet(layout, world.robotCount)) {
    if (r >= world.robotCount) break;
    world.robotCell[r] = c;
    world.occupant[c] = r++;
  }
  for (const c of layout.floorCells) {
    if (r >= world.robotCount) break;
    if (world.occupant[c] >= 0 || layout.kind[c] === CellKind.Parking) continue;
    if (layout.kind[c] !== CellKind.Floor) continue;
    world.robotCell[r] = c;
    world.occupant[c] = r++;
  }
  for (const c of layout.floorCells) {
    if (r >= world.robotCount) break;
    if (world.occupant[c] >= 0) continue;
    world.robotCell[r] = c;
    world.occupant[c] = r++;
  }
}

/** The unoccupied parking cell nearest to `from` by grid distance (ties: reading order), or -1. */
export function nearestFreeParking(world: World, layout: Layout, distances: DistanceTables, from: number): number {
  let best = -1;
  let bestDistance = Infinity;
  const table = distances.to(from);
  for (const c of layout.parking) {
    if (world.occupant[c] >= 0) continue;
    const d = table[c];
    if (d < bestDistance) {
      bestDistance = d;
      best = c;
    }
  }
  return best;
}
