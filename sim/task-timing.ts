/**
 * Where delivered tasks' time went, per sample interval of delivery (the lead-time split of
 * sim/lead-time-split.ts, summed in ticks), and the hour-by-hour profile of a run: tasks
 * released and delivered in each hour, and the lead times of tasks by the hour they were
 * released (the peak hour's customers are the ones a site is sized for).
 *
 * Memory: four numbers per sample interval and three per simulated hour, whatever the
 * number of tasks.
 */
import { splitLeadTime } from './lead-time-split.ts';

/** What a replication record keeps: plain data (typed arrays), so it crosses worker threads. */
export interface RecordedTaskTiming {
  intervalTicks: number;
  ticksPerHour: number;
  intervalCount: number;
  hourCount: number;
  leadPartTicks: Float64Array;
  releasedByHour: Float64Array;
  deliveredByHour: Float64Array;
  deliveredByReleaseHour: Float64Array;
  leadTicksByReleaseHour: Float64Array;
}

export class TaskTiming {
  readonly intervalCount: number;
  readonly hourCount: number;
  /** interval * 4 + part (waitingForRobot, emptyTravel, loadedTravel, handling): ticks of tasks delivered in the interval. */
  readonly leadPartTicks: Float64Array;
  /** Per hour of the run. */
  readonly releasedByHour: Float64Array;
  readonly deliveredByHour: Float64Array;
  /** Per hour of release: tasks delivered before the end, and the sum of their lead ticks. */
  readonly deliveredByReleaseHour: Float64Array;
  readonly leadTicksByReleaseHour: Float64Array;

  constructor(
    readonly intervalTicks: number,
    readonly endTick: number,
    readonly ticksPerHour: number,
  ) {
    this.intervalCount = Math.ceil(endTick / intervalTicks);
    this.hourCount = Math.ceil(endTick / ticksPerHour);
    this.leadPartTicks = new Float64Array(this.intervalCount * 4);
    this.releasedByHour = new Float64Array(this.hourCount);
    this.deliveredByHour = new Float64Array(this.hourCount);
    this.deliveredByReleaseHour = new Float64Array(this.hourCount);
    this.leadTicksByReleaseHour = new Float64Array(this.hourCount);
  }

  released(tick: number): void {
    if (tick < this.endTick) this.releasedByHour[Math.floor(tick / this.ticksPerHour)]++;
  }

  delivered(tick: number, releaseTick: number, assignedTick: number, pickedUpTick: number, pickupTicks: number, dropTicks: number): void {
    if (tick >= this.endTick) return;
    const parts = splitLeadTime(releaseTick, assignedTick, pickedUpTick, pickupTicks, tick, dropTicks);
    const base = Math.min(this.intervalCount - 1, Math.floor(tick / this.intervalTicks)) * 4;
    this.leadPartTicks[base] += parts.waitingForRobot;
    this.leadPartTicks[base + 1] += parts.emptyTravel;
    this.leadPartTicks[base + 2] += parts.loadedTravel;
    this.leadPartTicks[base + 3] += parts.handling;
    this.deliveredByHour[Math.floor(tick / this.ticksPerHour)]++;
    const releaseHour = Math.floor(releaseTick / this.ticksPerHour);
    this.deliveredByReleaseHour[releaseHour]++;
    this.leadTicksByReleaseHour[releaseHour] += tick - releaseTick;
  }

  toRecorded(): RecordedTaskTiming {
    const { intervalTicks, ticksPerHour, intervalCount, hourCount, leadPartTicks, releasedByHour, deliveredByHour, deliveredByReleaseHour, leadTicksByReleaseHour } = this;
    return { intervalTicks, ticksPerHour, intervalCount, hourCount, leadPartTicks, releasedByHour, deliveredByHour, deliveredByReleaseHour, leadTicksByReleaseHour };
  }
}
