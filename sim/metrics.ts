/**
 * Per-replication recorder. Everything a report needs is accumulated into fixed sample
 * intervals (`intervalTicks` long), so any window of whole intervals (after a warm-up cut,
 * or one batch of a batch-means analysis) can be summarized afterwards without re-running:
 * deliveries, tasks-in-system area, robot-ticks by activity, and station idle and starved
 * ticks per station. Lead times are kept per delivered task (delivery tick, lead ticks).
 *
 * Time-weighted quantities (station states, tasks in system) are accumulated lazily: a
 * state's duration is added when it changes, spread over the intervals it overlaps, so idle
 * stretches the engine skips cost nothing.
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

export interface DeadlockEpisode {
  /** Earliest tick from which one of its robots made no progress. */
  stallTick: number;
  detectTick: number;
  endTick: number;
  robots: number;
  lostTicks: number;
  cleared: boolean;
}

export class MetricsRecorder {
  readonly intervalCount: number;
  readonly deliveries: Float64Array;
  readonly releases: Float64Array;
  readonly tasksInSystemArea: Float64Array;
  readonly robotTicks: Float64Array;
  readonly stationIdle: Float64Array;
  readonly stationStarved: Float64Array;
  deliveryTicks: number[] = [];
  leadTicks: number[] = [];
  readonly episodes: DeadlockEpisode[] = [];
  /**
   * Robot-ticks of waiting per cell over the whole run (warm-up included): a robot holding a
   * task that did not move adds one tick at the cell it stands on. The floor heatmap of the
   * HTML report; `run --out` writes it as cells.csv.
   */
  readonly cellWaitingTicks: Float64Array;

  private inSystem = 0;
  private inSystemSince = 0;
  private readonly stationBusy: Uint8Array;
  private readonly stationPending: Int32Array;
  private readonly stationSince: Int32Array;

  constructor(
    readonly intervalTicks: number,
    readonly endTick: number,
    readonly stationCount: number,
    cellCount = 0,
  ) {
    this.cellWaitingTicks = new Float64Array(cellCount);
    this.intervalCount = Math.ceil(endTick / intervalTicks);
    this.deliveries = new Float64Array(this.intervalCount);
    this.releases = new Float64Array(this.intervalCount);
    this.tasksInSystemArea = new Float64Array(this.intervalCount);
    this.robotTicks = new Float64Array(this.intervalCount * activityCount);
    this.stationIdle = new Float64Array(this.intervalCount * stationCount);
    this.stationStarved = new Float64Array(this.intervalCount * stationCount);
    this.stationBusy = new Uint8Array(stationCount);
    this.stationPending = new Int32Array(stationCount);
    this.stationSince = new Int32Array(stationCount);
  }

  /** Length in ticks of interval i (the last may be partial). */
  intervalLength(i: number): number {
    return Math.min(this.intervalTicks, this.endTick - i * this.intervalTicks);
  }

  private intervalOf(tick: number): number {
    return Math.min(this.intervalCount - 1, Math.floor(tick / this.intervalTicks));
  }

  /** Adds `weight` per tick over [from, to) into `target[interval * stride + offset]`. */
  private spread(target: Float64Array, stride: number, offset: number, from: number, to: number, weight: number): void {
    if (weight === 0) return;
    const end = Math.min(to, this.endTick);
    let t = from;
    while (t < end) {
      const i = Math.floor(t / this.intervalTicks);
      const boundary = Math.min(end, (i + 1) * this.intervalTicks);
      target[i * stride + offset] += (boundary - t) * weight;
      t = boundary;
    }
  }

  // Robot activity -----------------------------------------------------------------

  /** One executed step [tick-1, tick): counts per activity. Hot path: called every motion tick. */
  addStep(tick: number, loaded: number, empty: number, handling: number, waiting: number, parked: number): void {
    const base = this.intervalOf(tick - 1) * activityCount;
    const r = this.robotTicks;
    r[base] += loaded;
    r[base + 1] += empty;
    r[base + 2] += handling;
    r[base + 3] += waiting;
    r[base + 4] += parked;
  }

  /** Robots standing still over [from, to) with the given activity counts. */
  addStill(from: number, to: number, handling: number, waiting: number, parked: number): void {
    this.spread(this.robotTicks, activityCount, RobotActivity.Handling, from, to, handling);
    this.spread(this.robotTicks, activityCount, RobotActivity.Waiting, from, to, waiting);
    this.spread(this.robotTicks, activityCount, RobotActivity.Parked, from, to, parked);
  }

  // Tasks --------------------------------------------------------------------------

  released(tick: number): void {
    this.flushInSystem(tick);
    this.inSystem++;
    if (tick < this.endTick) this.releases[this.intervalOf(tick)]++;
  }

  delivered(tick: number, releaseTick: number): void {
    this.flushInSystem(tick);
    this.inSystem--;
    if (tick >= this.endTick) return;
    this.deliveries[this.intervalOf(tick)]++;
    this.deliveryTicks.push(tick);
    this.leadTicks.push(tick - releaseTick);
  }

  private flushInSystem(tick: number): void {
    this.spread(this.tasksInSystemArea, 1, 0, this.inSystemSince, tick, this.inSystem);
    this.inSystemSince = tick;
  }

  // Stations -----------------------------------------------------------------------

  stationBusyChange(station: number, tick: number, busy: boolean): void {
    this.flushStation(station, tick);
    this.stationBusy[station] = busy ? 1 : 0;
  }

  stationPendingChange(station: number, tick: number, delta: number): void {
    this.flushStation(station, tick);
    this.stationPending[station] += delta;
  }

  private flushStation(station: number, tick: number): void {
    const since = this.stationSince[station];
    if (tick > since && !this.stationBusy[station]) {
      this.spread(this.stationIdle, this.stationCount, station, since, tick, 1);
      if (this.stationPending[station] > 0) this.spread(this.stationStarved, this.stationCount, station, since, tick, 1);
    }
    this.stationSince[station] = tick;
  }

  /** Closes every lazy accumulator at the end of the run. */
  finish(): void {
    this.flushInSystem(this.endTick);
    for (let s = 0; s < this.stationCount; s++) this.flushStation(s, this.endTick);
  }
}
