/**
 * Per-replication recorder of the fleet's upkeep (charging and breakdowns), in the same
 * fixed sample intervals as sim/metrics.ts so that any window of whole intervals (after the
 * warm-up cut, a batch) is summarized afterwards: robot-ticks charging (at, going to, or
 * queued for a charger), robot-ticks broken, robot-ticks queued for a charger, busy ticks
 * per charger, charges started, failures, robots that ran flat.
 *
 * Counts change only at upkeep transitions, so durations are accumulated lazily (added
 * when a count changes, spread over the intervals they overlap).
 */
import { spreadOverIntervals } from './metrics.ts';
/** What a replication record keeps: plain data (typed arrays and counts), so it crosses worker threads. */
export interface RecordedUpkeepMetrics {
  intervalTicks: number;
  intervalCount: number;
  chargerCount: number;
  chargingRobotTicks: Float64Array;
  brokenRobotTicks: Float64Array;
  queuedRobotTicks: Float64Array;
  behindFixedRobotTicks: Float64Array;
  chargerBusyTicks: Float64Array;
  chargesStarted: Float64Array;
  failures: Float64Array;
  ranFlat: Float64Array;
  deferredFailures: number;
  deferredTicks: number;
}

export class UpkeepMetrics {
  readonly intervalCount: number;
  readonly chargingRobotTicks: Float64Array;
  readonly brokenRobotTicks: Float64Array;
  readonly queuedRobotTicks: Float64Array;
  /**
   * Robot-ticks of robots standing blocked in a wait-for chain that ends only at robots fixed
   * for long (broken down, or charging on a charger): the deadlock detector's count.
   */
  readonly behindFixedRobotTicks: Float64Array;
  /** interval * chargerCount + charger: ticks a robot charged on it. */
  readonly chargerBusyTicks: Float64Array;
  readonly chargesStarted: Float64Array;
  readonly failures: Float64Array;
  /** Robots whose charge reached 0 before they were plugged in, by the interval it happened. */
  readonly ranFlat: Float64Array;
  /** Whole run: breakdowns that waited for the policy's safe stop, and their total wait in ticks. */
  deferredFailures = 0;
  deferredTicks = 0;

  private charging = 0;
  private broken = 0;
  private queued = 0;
  private behindFixed = 0;
  private since = 0;
  private readonly chargerOn: Uint8Array;
  private readonly chargerSince: Int32Array;

  constructor(
    readonly intervalTicks: number,
    public endTick: number,
    readonly chargerCount: number,
  ) {
    this.intervalCount = Math.ceil(endTick / intervalTicks);
    const n = this.intervalCount;
    this.chargingRobotTicks = new Float64Array(n);
    this.brokenRobotTicks = new Float64Array(n);
    this.queuedRobotTicks = new Float64Array(n);
    this.behindFixedRobotTicks = new Float64Array(n);
    this.chargerBusyTicks = new Float64Array(n * chargerCount);
    this.chargesStarted = new Float64Array(n);
    this.failures = new Float64Array(n);
    this.ranFlat = new Float64Array(n);
    this.chargerOn = new Uint8Array(chargerCount);
    this.chargerSince = new Int32Array(chargerCount);
  }

  private intervalOf(tick: number): number {
    return Math.min(this.intervalCount - 1, Math.floor(tick / this.intervalTicks));
  }

  /** Adds `weight` per tick over [from, to) into `target[interval * stride + offset]` (sim/metrics.ts). */
  private spread(target: Float64Array, stride: number, offset: number, from: number, to: number, weight: number): void {
    spreadOverIntervals(target, stride, offset, from, Math.min(to, this.endTick), weight, this.intervalTicks);
  }

  /** Robots charging (of which queued) and broken from `tick` on (deltas). */
  change(tick: number, charging: number, queued: number, broken: number): void {
    this.flush(tick);
    this.charging += charging;
    this.queued += queued;
    this.broken += broken;
  }

  /** Robots blocked only behind robots fixed for long, from `tick` on. */
  behindFixedSet(tick: number, robots: number): void {
    if (robots === this.behindFixed) return;
    this.flush(tick);
    this.behindFixed = robots;
  }

  chargerChange(charger: number, tick: number, busy: boolean): void {
    if (this.chargerOn[charger]) this.spread(this.chargerBusyTicks, this.chargerCount, charger, this.chargerSince[charger], tick, 1);
    this.chargerOn[charger] = busy ? 1 : 0;
    this.chargerSince[charger] = tick;
    if (busy && tick < this.endTick) this.chargesStarted[this.intervalOf(tick)]++;
  }

  failed(tick: number): void {
    if (tick < this.endTick) this.failures[this.intervalOf(tick)]++;
  }

  flat(tick: number): void {
    if (tick < this.endTick) this.ranFlat[this.intervalOf(tick)]++;
  }

  private flush(tick: number): void {
    this.spread(this.chargingRobotTicks, 1, 0, this.since, tick, this.charging);
    this.spread(this.queuedRobotTicks, 1, 0, this.since, tick, this.queued);
    this.spread(this.brokenRobotTicks, 1, 0, this.since, tick, this.broken);
    this.spread(this.behindFixedRobotTicks, 1, 0, this.since, tick, this.behindFixed);
    this.since = tick;
  }

  /** Closes the lazy accumulators at the end of the run. */
  finish(endTick = this.endTick): void {
    this.endTick = Math.min(this.endTick, endTick);
    this.flush(this.endTick);
    for (let c = 0; c < this.chargerCount; c++) if (this.chargerOn[c]) this.chargerChange(c, this.endTick, false);
  }

  toRecorded(): RecordedUpkeepMetrics {
    const { intervalTicks, intervalCount, chargerCount, chargingRobotTicks, brokenRobotTicks, queuedRobotTicks, behindFixedRobotTicks, chargerBusyTicks, chargesStarted, failures, ranFlat, deferredFailures, deferredTicks } = this;
    return { intervalTicks, intervalCount, chargerCount, chargingRobotTicks, brokenRobotTicks, queuedRobotTicks, behindFixedRobotTicks, chargerBusyTicks, chargesStarted, failures, ranFlat, deferredFailures, deferredTicks };
  }
}
