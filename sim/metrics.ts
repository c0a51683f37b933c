/**
 * Per-replication recorder. Everything a report needs is accumulated into fixed sample
 * intervals (`intervalTicks` long), so any window of whole intervals (after a warm-up cut,
 * or one batch of a batch-means analysis) can be summarized afterwards without re-running:
 * deliveries, releases, tasks-in-system area, robot-ticks by activity, robots holding a
 * task, robots parked while tasks wait, loaded distance of released and delivered tasks,
 * and per station: busy ticks, idle ticks while work waits split by its cause (no robot
 * assigned, or a robot assigned but still travelling) and robot-ticks queued at it.
 *
 * Time-weighted quantities (station states, tasks in system) are accumulated lazily: a
 * state's duration is added when it changes, spread over the intervals it overlaps, so idle
 * stretches the engine skips cost nothing.
 *
 * Memory: the per-interval arrays grow with the run (one sample per `sampleSeconds`), the
 * per-station ones as exact integer tick counts in 16- or 32-bit cells; lead times are kept
 * exactly, one 32-bit integer per delivered task (their delivery interval follows from the
 * per-interval delivery counts, so no delivery tick is stored).
 */

export const RobotActivity = {
  /** Moved while carrying a load. */
  Loaded: 0,
  /** Moved without a load (to a pickup, to parking). */
  Empty: 1,
  /** Standing at a station while the load is handled. */
  Handling: 2,
  /** Held a task but did not move (blocked, waiting for a reserved cell). */
  Waiting: 3,
  /** No task and not moving. */
  Parked: 4,
} as const;
export const robotActivityNames = ['loaded', 'empty', 'handling', 'waiting', 'parked'] as const;
const activityCount = 5;

/**
 * `deadlock`: robots that wait only on each other (a closed wait-for set); `livelock`: robots
 * that keep moving without getting closer to their goals; `gridlock`: the fleet as a whole
 * delivers nothing while tasks are open and robots free. See sim/deadlock-detector.ts.
 */
export type EpisodeKind = 'deadlock' | 'livelock' | 'gridlock';

export interface DeadlockEpisode {
  kind: EpisodeKind;
  /** Earliest tick from which one of its robots made no progress (gridlock: the fleet). */
  stallTick: number;
  detectTick: number;
  endTick: number;
  /** Number of robots that were members (members.length). */
  robots: number;
  /** Robot indices, in the order they joined. */
  members: number[];
  /** Robot-ticks lost: each member's time from its stall to its recovery (or the run's end). */
  lostTicks: number;
  /** The modelled operator cleared at least one of its robots. */
  cleared: boolean;
}

type TickCounts = Uint16Array | Uint32Array | Float64Array;

/**
 * Adds `weight` per tick over the ticks [from, end) into `target[interval * stride + offset]`,
 * split at the sample-interval boundaries (`intervalTicks` long): the one way every per-interval
 * time figure is accumulated (this file and sim/upkeep-metrics.ts).
 */
export function spreadOverIntervals(target: TickCounts, stride: number, offset: number, from: number, end: number, weight: number, intervalTicks: number): void {
  if (weight === 0) return;
  let t = from;
  while (t < end) {
    const i = Math.floor(t / intervalTicks);
    const boundary = Math.min(end, (i + 1) * intervalTicks);
    target[i * stride + offset] += (boundary - t) * weight;
    t = boundary;
  }
}

/** Integer tick counts up to `max` per cell, in the narrowest exact typed array. */
function tickCounts(length: number, max: number): TickCounts {
  if (max <= 0xffff) return new Uint16Array(length);
  if (max <= 0xffffffff) return new Uint32Array(length);
  return new Float64Array(length);
}

/**
 * What a finished replication keeps of its recorder: the public data fields (and getters'
 * values) only, as a plain object (no methods, no prototype), so that it crosses worker
 * threads (structured clone) unchanged. Derived from the class so that a new recorded field
 * is carried along.
 */
export type RecordedMetrics = {
  readonly [K in keyof MetricsRecorder as MetricsRecorder[K] extends (...args: never[]) => unknown ? never : K]: MetricsRecorder[K];
};

/** Length in ticks of sample interval i (the last may be partial). */
export function intervalLengthOf(metrics: Pick<RecordedMetrics, 'intervalTicks' | 'endTick'>, i: number): number {
  return Math.min(metrics.intervalTicks, metrics.endTick - i * metrics.intervalTicks);
}

export class MetricsRecorder {
  /** Whole or partial sample intervals up to `endTick`. */
  intervalCount: number;
  readonly deliveries: Float64Array;
  readonly releases: Float64Array;
  readonly tasksInSystemArea: Float64Array;
  readonly robotTicks: Float64Array;
  /** Robot-ticks of robots holding a task (any phase but idle). */
  readonly busyRobotTicks: Float64Array;
  /** Robot-ticks of robots parked (no task, not moving) while at least one released task was open. */
  readonly parkedWhileOpenTicks: Float64Array;
  /** Sum of loaded distances (cells: pickup to drop, and back for round trips) of tasks released / delivered per interval. */
  readonly releasedLoadedCells: Float64Array;
  readonly deliveredLoadedCells: Float64Array;
  /** Per interval x station (index interval * stationCount + station): ticks a robot was in service. */
  readonly stationBusy: TickCounts;
  /** Idle ticks while work for the station waited and no robot was assigned to any of it. */
  readonly stationNoRobot: TickCounts;
  /** Idle ticks while work waited and a robot assigned to it was still on its way. */
  readonly stationTravelling: TickCounts;
  /** Robot-ticks of robots queued behind a robot in service at the station. */
  readonly stationQueue: TickCounts;
  /** Whole run, per station: tasks released with work there, and handlings finished there. */
  readonly stationReleased: Float64Array;
  readonly stationServed: Float64Array;
  readonly episodes: DeadlockEpisode[] = [];
  /**
   * Robot-ticks of waiting per cell over the whole run (warm-up included): a robot holding a
   * task that did not move adds one tick at the cell it stands on. The floor heatmap of the
   * HTML report; `run --out` writes it as cells.csv. Whole ticks in 4 bytes per cell: a
   * collision-free run adds at most one per tick to a cell (86,400 in a day of 1 s ticks, far
   * below 2^31), and the engine writes it at every tick, so its bytes count on big halls
   * (480 KB on 120,000 cells, against 960 KB as doubles).
   */
  readonly cellWaitingTicks: Int32Array;

  /**
   * Grows by doubling from a small start: the first growth then comes within the first
   * deliveries, before the delivery path is optimised, so that later growths run in the
   * optimised code (a first growth after it deoptimises the engine's handling step).
   */
  private leadBuffer = new Int32Array(16);
  private leadCount = 0;
  private inSystem = 0;
  private inSystemSince = 0;
  private readonly busy: Uint8Array;
  private readonly unassigned: Int32Array;
  private readonly assigned: Int32Array;
  private readonly queued: Int32Array;
  private readonly since: Int32Array;

  constructor(
    readonly intervalTicks: number,
    /** End of the run; `truncate` moves it earlier when a trace ends the run. */
    public endTick: number,
    readonly stationCount: number,
    robots = 0,
    cellCount = 0,
  ) {
    this.cellWaitingTicks = new Int32Array(cellCount);
    this.intervalCount = Math.ceil(endTick / intervalTicks);
    const n = this.intervalCount;
    this.deliveries = new Float64Array(n);
    this.releases = new Float64Array(n);
    this.tasksInSystemArea = new Float64Array(n);
    this.robotTicks = new Float64Array(n * activityCount);
    this.busyRobotTicks = new Float64Array(n);
    this.parkedWhileOpenTicks = new Float64Array(n);
    this.releasedLoadedCells = new Float64Array(n);
    this.deliveredLoadedCells = new Float64Array(n);
    this.stationBusy = tickCounts(n * stationCount, intervalTicks);
    this.stationNoRobot = tickCounts(n * stationCount, intervalTicks);
    this.stationTravelling = tickCounts(n * stationCount, intervalTicks);
    this.stationQueue = tickCounts(n * stationCount, intervalTicks * Math.max(1, robots));
    this.stationReleased = new Float64Array(stationCount);
    this.stationServed = new Float64Array(stationCount);
    this.busy = new Uint8Array(stationCount);
    this.unassigned = new Int32Array(stationCount);
    this.assigned = new Int32Array(stationCount);
    this.queued = new Int32Array(stationCount);
    this.since = new Int32Array(stationCount);
  }

  /** Length in ticks of interval i (the last may be partial). */
  intervalLength(i: number): number {
    return intervalLengthOf(this, i);
  }

  /** The recorded data as a plain object (call after finish()): every field, and the value of every getter. */
  toRecorded(): RecordedMetrics {
    const plain: Record<string, unknown> = {};
    for (const [key, value] of Object.entries(this)) plain[key] = value;
    for (const [key, descriptor] of Object.entries(Object.getOwnPropertyDescriptors(Object.getPrototypeOf(this)))) {
      if (descriptor.get) plain[key] = (this as unknown as Record<string, unknown>)[key];
    }
    return plain as unknown as RecordedMetrics;
  }

  /** Lead time in ticks of every task delivered before the end, in delivery order (a view, not a copy). */
  get leadTicks(): Int32Array {
    return this.leadBuffer.subarray(0, this.leadCount);
  }

  private intervalOf(tick: number): number {
    return Math.min(this.intervalCount - 1, Math.floor(tick / this.intervalTicks));
  }

  /** Adds `weight` per tick over [from, to) into `target[interval * stride + offset]`. */
  private spread(target: TickCounts, stride: number, offset: number, from: number, to: number, weight: number): void {
    spreadOverIntervals(target, stride, offset, from, Math.min(to, this.endTick), weight, this.intervalTicks);
  }

  // Robot activity -----------------------------------------------------------------

  /**
   * One executed step [tick-1, tick): counts per activity, robots holding a task, robots
   * parked while tasks were open. Hot path: called every motion tick.
   */
  addStep(tick: number, loaded: number, empty: number, handling: number, waiting: number, parked: number, busy: number, parkedWhileOpen: number): void {
    const i = this.intervalOf(tick - 1);
    const base = i * activityCount;
    const r = this.robotTicks;
    r[base] += loaded;
    r[base + 1] += empty;
    r[base + 2] += handling;
    r[base + 3] += waiting;
    r[base + 4] += parked;
    this.busyRobotTicks[i] += busy;
    this.parkedWhileOpenTicks[i] += parkedWhileOpen;
  }

  /** Robots standing still over [from, to) with the given counts. */
  addStill(from: number, to: number, handling: number, waiting: number, parked: number, busy: number, parkedWhileOpen: number): void {
    this.spread(this.robotTicks, activityCount, RobotActivity.Handling, from, to, handling);
    this.spread(this.robotTicks, activityCount, RobotActivity.Waiting, from, to, waiting);
    this.spread(this.robotTicks, activityCount, RobotActivity.Parked, from, to, parked);
    this.spread(this.busyRobotTicks, 1, 0, from, to, busy);
    this.spread(this.parkedWhileOpenTicks, 1, 0, from, to, parkedWhileOpen);
  }

  // Tasks --------------------------------------------------------------------------

  released(tick: number, loadedCells = 0): void {
    this.flushInSystem(tick);
    this.inSystem++;
    if (tick < this.endTick) {
      const i = this.intervalOf(tick);
      this.releases[i]++;
      this.releasedLoadedCells[i] += loadedCells;
    }
  }

  delivered(tick: number, releaseTick: number, loadedCells = 0): void {
    this.flushInSystem(tick);
    this.inSystem--;
    if (tick >= this.endTick) return;
    const i = this.intervalOf(tick);
    this.deliveries[i]++;
    this.deliveredLoadedCells[i] += loadedCells;
    if (this.leadCount === this.leadBuffer.length) {
      const grown = new Int32Array(this.leadBuffer.length * 2);
      grown.set(this.leadBuffer);
      this.leadBuffer = grown;
    }
    this.leadBuffer[this.leadCount++] = tick - releaseTick;
  }

  private flushInSystem(tick: number): void {
    this.spread(this.tasksInSystemArea, 1, 0, this.inSystemSince, tick, this.inSystem);
    this.inSystemSince = tick;
  }

  // Stations -----------------------------------------------------------------------

  stationBusyChange(station: number, tick: number, busy: boolean): void {
    this.flushStation(station, tick);
    this.busy[station] = busy ? 1 : 0;
    if (!busy) this.stationServed[station]++;
  }

  /**
   * Work for a station where work queues: `unassigned` counts waiting tasks no robot holds,
   * `assigned` those whose robot is on its way (deltas).
   */
  stationWorkChange(station: number, tick: number, unassigned: number, assigned: number): void {
    this.flushStation(station, tick);
    this.unassigned[station] += unassigned;
    this.assigned[station] += assigned;
  }

  /** Counts a released task with work at the station (whole run). */
  stationTaskReleased(station: number): void {
    this.stationReleased[station]++;
  }

  /** Robots queued behind the robot in service at the station, from now on. */
  stationQueueSet(station: number, tick: number, robots: number): void {
    if (this.queued[station] === robots) return;
    this.flushStation(station, tick);
    this.queued[station] = robots;
  }

  private flushStation(station: number, tick: number): void {
    const since = this.since[station];
    if (tick > since) {
      const stride = this.stationCount;
      if (this.busy[station]) this.spread(this.stationBusy, stride, station, since, tick, 1);
      else if (this.assigned[station] > 0) this.spread(this.stationTravelling, stride, station, since, tick, 1);
      else if (this.unassigned[station] > 0) this.spread(this.stationNoRobot, stride, station, since, tick, 1);
      this.spread(this.stationQueue, stride, station, since, tick, this.queued[station]);
    }
    this.since[station] = tick;
  }

  /**
   * The run ended before the planned end (a trace whose last task was delivered): later
   * intervals are dropped from `intervalCount`; the arrays keep their length (zeros).
   */
  truncate(endTick: number): void {
    if (endTick >= this.endTick) return;
    this.endTick = endTick;
    this.intervalCount = Math.ceil(endTick / this.intervalTicks);
  }

  /** Closes every lazy accumulator at the end of the run. */
  finish(): void {
    this.flushInSystem(this.endTick);
    for (let s = 0; s < this.stationCount; s++) this.flushStation(s, this.endTick);
  }
}
