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
 * handling times, policy), each seeded from (seed, replication, purpose), so two policies
 * run on one seed see the same task stream (common random numbers). Handling times are
 * drawn when a task is released, in release order, for the same reason.
 */
import seedrandom from 'seedrandom';
import type { Scenario } from './model.ts';
import { tickSecondsOf } from './model.ts';
import { CellKind, type Layout } from './layout.ts';
import type { DistanceTables } from './distance-table.ts';
import { EventQueue } from './event-queue.ts';
import { World, Phase, TaskState, isHandling, isLoaded } from './world.ts';
import type { Policy, PolicyFactory } from './policy.ts';
import { CollisionValidator } from './validator.ts';
import { MetricsRecorder, type DeadlockEpisode } from './metrics.ts';
import { ArrivalProcess, makeHandlingSampler, makePointChooser } from './demand.ts';
import { RunError } from './errors.ts';
import { GoalProgress } from './goal-progress.ts';

const EventKind = { Motion: 0, HandlingDone: 1, Release: 2, Recover: 3, Wake: 4, Check: 5, End: 6 } as const;

export interface SimulationSetup {
  scenario: Scenario;
  layout: Layout;
  distances: DistanceTables;
  policy: PolicyFactory<any>;
  policyOptions: unknown;
}

export interface ReplicationRecord {
  replication: number;
  tickSeconds: number;
  endTick: number;
  metrics: MetricsRecorder;
  /** Station cells, in the order of the station arrays in `metrics`. */
  stationCells: Int32Array;
  released: number;
  delivered: number;
  open: number;
  collisions: number;
  vertexCollisions: number;
  swapCollisions: number;
  illegalSteps: number;
  collisionExamples: string[];
  agentSteps: number;
  motionTicks: number;
  events: number;
  wallSeconds: number;
  planningSeconds: number;
  policyCounters: Record<string, number>;
  /** Shelves at storage + on robots at the end (round trips); equals the storage count. */
  shelvesAccounted: number;
  /** Shelves standing on their storage points at the end (round trips). */
  shelvesAtStorage: number;
  /** Release ticks of the tasks not delivered at the end of the run, ascending: lead time of an unstable run counts their ages. */
  openTaskReleaseTicks: number[];
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

export function runReplication(setup: SimulationSetup, replication: number, hooks: ReplicationHooks = {}): ReplicationRecord {
  const wallStart = performance.now();
  const { scenario, layout, distances } = setup;
  const tickSeconds = tickSecondsOf(scenario);
  const run = scenario.run;
  const endTick = Math.max(1, Math.round((run.hours * 3600) / tickSeconds));
  const intervalTicks = Math.max(1, Math.round(run.sampleSeconds / tickSeconds));
  const deadlockTicks = Math.max(1, Math.round(run.deadlockSeconds / tickSeconds));
  const recoveryTicks = Math.round(run.recoverySeconds / tickSeconds);
  const robots = scenario.fleet.robots;
  const demand = scenario.demand;
  const roundTrip = demand.mode === 'round-trip';

  // Stations: every pickup and drop point.
  const stationOf = new Int32Array(layout.cellCount).fill(-1);
  const stationCellsList: number[] = [];
  for (let c = 0; c < layout.cellCount; c++) {
    if (layout.kind[c] === CellKind.Pickup || layout.kind[c] === CellKind.Drop) {
      stationOf[c] = stationCellsList.length;
      stationCellsList.push(c);
    }
  }
  const stationCells = Int32Array.from(stationCellsList);
  const metrics = new MetricsRecorder(intervalTicks, endTick, stationCells.length, layout.cellCount);

  const world = new World(layout, robots);
  placeRobots(world, layout);
  const validator = new CollisionValidator(layout, world.robotCell);

  // Random streams, one per purpose.
  const seed = run.seed;
  const arrivalStream = streamFor(seed, replication, 'arrivals');
  const pickupStream = streamFor(seed, replication, 'pickups');
  const dropStream = streamFor(seed, replication, 'drops');
  const handlingStream = streamFor(seed, replication, 'handling');
  const policyStream = streamFor(seed, replication, 'policy');

  const pickupHandling = makeHandlingSampler(scenario.handling.pickupSeconds, tickSeconds);
  const dropHandling = makeHandlingSampler(scenario.handling.dropSeconds, tickSeconds);
  const pickupCells = roundTrip ? layout.storage : layout.pickups;
  const choosePickup = demand.kind === 'trace' ? null : makePointChooser(pickupCells, demand.pickups);
  const chooseDrop = demand.kind === 'trace' ? null : makePointChooser(layout.drops, demand.drops);

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
  let tick = 0;
  let policyDirty = true;
  let motionScheduledFor = -1;
  let events = 0;

  const releaseTask = (t: number, pickup: number, drop: number): void => {
    const pickupTicks = pickupHandling(handlingStream);
    const dropTicks = dropHandling(handlingStream);
    const returnTicks = roundTrip ? pickupHandling(handlingStream) : 0;
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
    metrics.released(t);
    const ps = stationOf[pickup];
    if (ps >= 0) metrics.stationPendingChange(ps, t, 1);
    const ds = stationOf[drop];
    if (ds >= 0) metrics.stationPendingChange(ds, t, 1);
    policyDirty = true;
  };

  const newRandomTask = (t: number): void => {
    releaseTask(t, choosePickup!(pickupStream), chooseDrop!(dropStream));
  };

  // Demand ------------------------------------------------------------------------
  let arrivals: ArrivalProcess | null = null;
  let traceIndex = 0;
  const secondsToTick = (s: number) => Math.floor(s / tickSeconds + 1e-9);
  if (demand.kind === 'poisson') {
    arrivals = new ArrivalProcess(demand.tasksPerHour, demand.profile);
    const first = secondsToTick(arrivals.next(arrivalStream));
    if (first < endTick) queue.schedule(first, EventKind.Release, EventKind.Release);
  } else if (demand.kind === 'trace') {
    if (demand.tasks.length > 0) {
      const first = secondsToTick(demand.tasks[0].releaseSeconds);
      if (first < endTick) queue.schedule(first, EventKind.Release, EventKind.Release);
    }
  } else {
    for (let i = 0; i < robots; i++) newRandomTask(0);
    // Saturated demand keeps one open task per robot: an assignment releases the next,
    // unless a task taken back by a swap already refilled the list.
    world.onAssign = () => {
      if (world.openTasks.length < robots) newRandomTask(world.currentTick);
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
    world.robotPhase[robot] = world.robotPhase[robot] + 1; // To* -> Handling*
    world.robotHandlingUntil[robot] = t + h;
    const s = stationOf[cell];
    if (s >= 0) metrics.stationBusyChange(s, t, true);
    progressed(robot, t);
    if (h === 0) finishHandling(robot, t);
    else queue.schedule(t + h, EventKind.HandlingDone, EventKind.HandlingDone, robot);
  };

  const arriveIfAtGoal = (robot: number, t: number): void => {
    const goal = world.goalOf(robot);
    if (goal >= 0 && world.robotCell[robot] === goal) startHandling(robot, t);
  };
  world.onArrive = (robot) => startHandling(robot, world.currentTick);

  const finishHandling = (robot: number, t: number): void => {
    const task = world.robotTask[robot];
    const cell = world.robotCell[robot];
    const s = stationOf[cell];
    if (s >= 0) metrics.stationBusyChange(s, t, false);
    const phase = world.robotPhase[robot];
    policyDirty = true;
    if (phase === Phase.HandlingPickup) {
      world.taskState[task] = TaskState.PickedUp;
      world.taskPickedTick[task] = t;
      if (s >= 0) metrics.stationPendingChange(s, t, -1);
      if (roundTrip) {
        shelfHome[cell] = 0;
        shelvesOnRobots++;
      }
      world.robotPhase[robot] = Phase.ToDrop;
      progressed(robot, t);
      arriveIfAtGoal(robot, t);
    } else if (phase === Phase.HandlingDrop) {
      world.taskState[task] = TaskState.Delivered;
      world.taskDeliveredTick[task] = t;
      if (s >= 0) metrics.stationPendingChange(s, t, -1);
      delivered++;
      metrics.delivered(t, world.taskRelease[task]);
      if (roundTrip) {
        world.robotPhase[robot] = Phase.ToReturn;
        progressed(robot, t);
        arriveIfAtGoal(robot, t);
      } else {
        world.robotTask[robot] = -1;
        world.robotPhase[robot] = Phase.Idle;
        world.version++;
        progressed(robot, t);
      }
      checkConservation(t);
    } else if (phase === Phase.HandlingReturn) {
      shelfHome[cell] = 1;
      shelvesOnRobots--;
      world.robotTask[robot] = -1;
      world.robotPhase[robot] = Phase.Idle;
      world.version++;
      progressed(robot, t);
      const list = shelfQueue.get(cell);
      if (list && list.length > 0) {
        const next = list.shift()!;
        heldTasks--;
        world.taskState[next] = TaskState.Open;
        world.openTasks.push(next);
        world.openTasks.sort((a, b) => world.taskRelease[a] - world.taskRelease[b] || a - b);
        world.version++;
      } else {
        shelfBusy[cell] = 0;
      }
    }
  };

  const checkConservation = (t: number): void => {
    let inFlight = 0;
    for (let r = 0; r < robots; r++) {
      const task = world.robotTask[r];
      if (task >= 0 && world.taskState[task] !== TaskState.Delivered) inFlight++;
    }
    const waiting = world.openTasks.length + heldTasks;
    if (released !== delivered + inFlight + waiting) {
      throw new RunError(
        `conservation broken at tick ${t}: released ${released} != delivered ${delivered} + in flight ${inFlight} + waiting ${waiting}`,
      );
    }
    if (roundTrip) {
      let home = 0;
      for (const c of layout.storage) home += shelfHome[c];
      if (home + shelvesOnRobots !== layout.storage.length) {
        throw new RunError(`shelf count broken at tick ${t}: ${home} at storage + ${shelvesOnRobots} on robots != ${layout.storage.length}`);
      }
    }
  };

  // Deadlock detection --------------------------------------------------------------
  // Progress = a phase change or a new best distance to the current goal. A robot holding a
  // goal that makes none for deadlockTicks is stalled; neighbouring stalled robots form one
  // episode. This also catches livelocks (robots that move without getting closer).
  const lastProgress = new Int32Array(robots);
  const goalProgress = new GoalProgress(robots, distances.fields);
  const episodeOf = new Int32Array(robots).fill(-1);
  const stallStart = new Int32Array(robots);
  const episodes: (DeadlockEpisode & { members: Set<number> })[] = [];
  function progressed(robot: number, t: number): void {
    lastProgress[robot] = t;
    goalProgress.reset(robot);
    if (episodeOf[robot] >= 0) leaveEpisode(robot, t, false);
  }
  const leaveEpisode = (robot: number, t: number, cleared: boolean): void => {
    const episode = episodes[episodeOf[robot]];
    episode.lostTicks += t - stallStart[robot];
    episode.members.delete(robot);
    if (cleared) episode.cleared = true;
    episodeOf[robot] = -1;
    if (episode.members.size === 0) episode.endTick = t;
  };
  const holdsGoal = (robot: number): boolean => {
    const phase = world.robotPhase[robot];
    return phase === Phase.ToPickup || phase === Phase.ToDrop || phase === Phase.ToReturn;
  };
  const detectStalls = (t: number): void => {
    for (let r = 0; r < robots; r++) {
      if (episodeOf[r] >= 0 || !holdsGoal(r)) continue;
      if (t - lastProgress[r] < deadlockTicks) continue;
      let join = -1;
      const cell = world.robotCell[r];
      for (let d = 0; d < 4 && join < 0; d++) {
        const n = layout.neighbors[cell * 4 + d];
        if (n >= 0 && world.occupant[n] >= 0) join = episodeOf[world.occupant[n]];
      }
      if (join < 0) {
        join = episodes.length;
        episodes.push({ stallTick: lastProgress[r], detectTick: t, endTick: -1, robots: 0, lostTicks: 0, cleared: false, members: new Set() });
        if (setup.policy.allowsRecovery && recoveryTicks > 0) queue.schedule(t + recoveryTicks, EventKind.Recover, EventKind.Recover, join);
      }
      const episode = episodes[join];
      episode.members.add(r);
      episode.robots++;
      episode.stallTick = Math.min(episode.stallTick, lastProgress[r]);
      episodeOf[r] = join;
      stallStart[r] = lastProgress[r];
    }
  };
  const recover = (episodeId: number, t: number): void => {
    const episode = episodes[episodeId];
    // The operator leaves one robot of the jam (the lowest-numbered) in place and drives the
    // others to parking, so the one left can go on; clearing every robot to parking can
    // rebuild the same head-on jam when they set out again.
    const members = [...episode.members].sort((a, b) => a - b);
    for (const r of members.slice(members.length > 1 ? 1 : 0)) {
      const target = nearestFreeParking(world, layout, distances, world.robotCell[r]);
      if (target < 0) continue;
      const from = world.robotCell[r];
      world.occupant[from] = -1;
      world.robotCell[r] = target;
      world.occupant[target] = r;
      validator.relocate(r, target);
      leaveEpisode(r, t, true);
      lastProgress[r] = t;
      goalProgress.reset(r);
      policy.onRelocated?.(r, t);
      arriveIfAtGoal(r, t);
    }
    policyDirty = true;
    // A robot left in place that still makes no progress is cleared at the next visit.
    if (episode.members.size > 0) queue.schedule(t + recoveryTicks, EventKind.Recover, EventKind.Recover, episodeId);
  };

  // Policy ------------------------------------------------------------------------------
  const policy: Policy = setup.policy.create(
    { world, layout, distances, tickSeconds, random: policyStream },
    setup.policyOptions as never,
  );
  const moves = new Int32Array(robots);
  let planningMs = 0;
  let motionTicks = 0;
  let agentSteps = 0;
  let accountedUntil = 0;

  const accountStill = (from: number, to: number): void => {
    if (to <= from) return;
    let handling = 0;
    let waiting = 0;
    let parked = 0;
    const cellWaiting = metrics.cellWaitingTicks;
    for (let r = 0; r < robots; r++) {
      const phase = world.robotPhase[r];
      if (isHandling(phase)) handling++;
      else if (phase !== Phase.Idle) {
        waiting++;
        cellWaiting[world.robotCell[r]] += to - from;
      } else parked++;
    }
    metrics.addStill(from, to, handling, waiting, parked);
  };

  const executeMotion = (t: number): void => {
    // Apply the moves decided at t-1; handling robots stay whatever the policy wrote.
    let loaded = 0;
    let empty = 0;
    let handling = 0;
    let waiting = 0;
    let parked = 0;
    const cells = world.robotCell;
    const occupant = world.occupant;
    for (let r = 0; r < robots; r++) {
      const phase = world.robotPhase[r];
      const from = cells[r];
      if (isHandling(phase)) {
        handling++;
        continue;
      }
      const to = moves[r];
      if (to === from) {
        if (phase === Phase.Idle) parked++;
        else {
          waiting++;
          metrics.cellWaitingTicks[from]++;
        }
        continue;
      }
      if (isLoaded(phase)) loaded++;
      else empty++;
      if (occupant[from] === r) occupant[from] = -1;
      cells[r] = to;
    }
    for (let r = 0; r < robots; r++) occupant[cells[r]] = r;
    validator.check(cells, t);
    metrics.addStep(t, loaded, empty, handling, waiting, parked);
    motionTicks++;
    agentSteps += robots;
    // Arrivals and progress.
    for (let r = 0; r < robots; r++) {
      const goal = world.goalOf(r);
      if (goal < 0) {
        if (!isHandling(world.robotPhase[r])) lastProgress[r] = t;
        continue;
      }
      const cell = cells[r];
      if (cell === goal) {
        startHandling(r, t);
        continue;
      }
      if (goalProgress.observe(r, goal, cell)) {
        lastProgress[r] = t;
        if (episodeOf[r] >= 0) leaveEpisode(r, t, false);
      }
    }
    detectStalls(t);
    hooks.afterMotion?.(t, world);
  };

  // Main loop -------------------------------------------------------------------------
  for (let r = 0; r < robots; r++) lastProgress[r] = 0;
  queue.schedule(0, EventKind.Wake, EventKind.Wake);
  queue.schedule(endTick, EventKind.End, EventKind.End);
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
        hooks.progress(Math.min(1, t / endTick));
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
          detectStalls(tick);
          break;
        case EventKind.End:
          ended = true;
          break;
      }
    }
    if (ended) break;
    if (!policyDirty) continue;
    policyDirty = false;
    for (let r = 0; r < robots; r++) moves[r] = world.robotCell[r];
    const planStart = performance.now();
    const wanted = policy.step(tick, moves);
    planningMs += performance.now() - planStart;
    let anyMove = false;
    for (let r = 0; r < robots; r++) {
      if (moves[r] !== world.robotCell[r] && !isHandling(world.robotPhase[r])) {
        anyMove = true;
        break;
      }
    }
    if ((anyMove || wanted <= tick + 1) && motionScheduledFor !== tick + 1) {
      queue.schedule(tick + 1, EventKind.Motion, EventKind.Motion);
      motionScheduledFor = tick + 1;
    } else if (!anyMove && wanted > tick + 1) {
      if (Number.isFinite(wanted)) queue.schedule(wanted, EventKind.Wake, EventKind.Wake);
      // Robots holding a goal while nothing moves: make sure a stall is still noticed.
      let earliest = Infinity;
      for (let r = 0; r < robots; r++) {
        if (holdsGoal(r) && episodeOf[r] < 0) earliest = Math.min(earliest, lastProgress[r] + deadlockTicks);
      }
      if (earliest < endTick && earliest < wanted) queue.schedule(Math.max(earliest, tick + 1), EventKind.Check, EventKind.Check);
    }
  }
  accountStill(accountedUntil, endTick);
  metrics.finish();
  for (let r = 0; r < robots; r++) if (episodeOf[r] >= 0) leaveEpisode(r, endTick, false);
  for (const episode of episodes) {
    const { members: _members, ...plain } = episode;
    if (plain.endTick < 0) plain.endTick = endTick;
    metrics.episodes.push(plain);
  }
  checkConservation(endTick);
  let home = 0;
  for (const c of layout.storage) home += shelfHome[c];
  const openTaskReleaseTicks: number[] = [];
  for (let task = 0; task < world.taskCount; task++) if (world.taskState[task] !== TaskState.Delivered) openTaskReleaseTicks.push(world.taskRelease[task]);
  openTaskReleaseTicks.sort((a, b) => a - b);

  return {
    replication,
    tickSeconds,
    endTick,
    metrics,
    stationCells,
    released,
    delivered,
    open: released - delivered,
    collisions: validator.collisions,
    vertexCollisions: validator.vertexCollisions,
    swapCollisions: validator.swapCollisions,
    illegalSteps: validator.illegalSteps,
    collisionExamples: validator.examples,
    agentSteps,
    motionTicks,
    events,
    wallSeconds: (performance.now() - wallStart) / 1000,
    planningSeconds: planningMs / 1000,
    policyCounters: policy.counters?.() ?? {},
    shelvesAccounted: home + shelvesOnRobots,
    shelvesAtStorage: home,
    openTaskReleaseTicks,
  };
}

/** Robots start on parking spots in reading order, then on floor cells in reading order. */
export function placeRobots(world: World, layout: Layout): void {
  let r = 0;
  for (const c of layout.parking) {
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
