/**
 * The metrics of one replication over a window of whole sample intervals [from, to): the
 * whole post-warm-up run, or one batch of a batch-means analysis. Pure function of the
 * recorded intervals. Times come out in seconds and rates in tasks per hour; ticks stay
 * inside.
 */
import type { ReplicationRecord } from '../sim/engine.ts';
import { quantileSorted } from './stats/index.ts';

export interface WindowMetrics {
  throughputPerHour: number;
  stationIdleFraction: number;
  stationStarvedFraction: number;
  /** NaN when no task was delivered in the window. */
  leadTimeSeconds: number;
  leadTimeP50Seconds: number;
  leadTimeP95Seconds: number;
  tasksInSystem: number;
  robotTime: { loaded: number; empty: number; handling: number; waiting: number; parked: number };
  deadlocks: number;
  deadlockRobotHoursLost: number;
  delivered: number;
  /** Tasks still open at the end whose ages entered the lead times (0 unless asked for). */
  openTasksCounted: number;
  /** Per station (in record.stationCells order). */
  stationIdle: number[];
  stationStarved: number[];
}

/**
 * `countOpenTasks`: for a window that ends at the end of the run, lead times also count the
 * age of every task still open then (its lead time so far, a lower bound of its real one).
 * An unstable run's lead time from delivered tasks alone is biased low: the tasks that wait
 * longest are the ones never delivered.
 */
export function windowMetrics(record: ReplicationRecord, from: number, to: number, countOpenTasks = false): WindowMetrics {
  const m = record.metrics;
  const tickSeconds = record.tickSeconds;
  const fromTick = from * m.intervalTicks;
  const toTick = Math.min(record.endTick, to * m.intervalTicks);
  const ticks = toTick - fromTick;
  const hours = (ticks * tickSeconds) / 3600;

  let delivered = 0;
  let inSystemArea = 0;
  const activity = [0, 0, 0, 0, 0];
  for (let i = from; i < to; i++) {
    delivered += m.deliveries[i];
    inSystemArea += m.tasksInSystemArea[i];
    for (let a = 0; a < 5; a++) activity[a] += m.robotTicks[i * 5 + a];
  }
  const robotTicks = activity.reduce((s, v) => s + v, 0) || 1;

  const stations = m.stationCount;
  const stationIdle: number[] = new Array(stations).fill(0);
  const stationStarved: number[] = new Array(stations).fill(0);
  for (let i = from; i < to; i++) {
    for (let s = 0; s < stations; s++) {
      stationIdle[s] += m.stationIdle[i * stations + s];
      stationStarved[s] += m.stationStarved[i * stations + s];
    }
  }
  let idleSum = 0;
  let starvedSum = 0;
  for (let s = 0; s < stations; s++) {
    stationIdle[s] /= ticks;
    stationStarved[s] /= ticks;
    idleSum += stationIdle[s];
    starvedSum += stationStarved[s];
  }

  // Lead times of tasks delivered inside the window (delivery ticks are sorted).
  const lo = lowerBound(m.deliveryTicks, fromTick);
  const hi = lowerBound(m.deliveryTicks, toTick);
  const deliveredLeads = m.leadTicks.slice(lo, hi);
  const open = countOpenTasks ? record.openTaskReleaseTicks.filter((release) => release < toTick) : [];
  const leads = new Float64Array(deliveredLeads.length + open.length);
  leads.set(deliveredLeads);
  for (let i = 0; i < open.length; i++) leads[deliveredLeads.length + i] = toTick - open[i];
  leads.sort();
  let leadSum = 0;
  for (const v of leads) leadSum += v;
  const leadMean = leads.length > 0 ? (leadSum / leads.length) * tickSeconds : NaN;
  const p50 = leads.length > 0 ? quantileSorted(leads, 0.5) * tickSeconds : NaN;
  const p95 = leads.length > 0 ? quantileSorted(leads, 0.95) * tickSeconds : NaN;

  let deadlocks = 0;
  let lostTicks = 0;
  for (const episode of m.episodes) {
    if (episode.detectTick >= fromTick && episode.detectTick < toTick) {
      deadlocks++;
      lostTicks += episode.lostTicks;
    }
  }

  return {
    throughputPerHour: hours > 0 ? delivered / hours : NaN,
    stationIdleFraction: stations > 0 ? idleSum / stations : NaN,
    stationStarvedFraction: stations > 0 ? starvedSum / stations : NaN,
    leadTimeSeconds: leadMean,
    leadTimeP50Seconds: p50,
    leadTimeP95Seconds: p95,
    tasksInSystem: ticks > 0 ? inSystemArea / ticks : NaN,
    robotTime: {
      loaded: activity[0] / robotTicks,
      empty: activity[1] / robotTicks,
      handling: activity[2] / robotTicks,
      waiting: activity[3] / robotTicks,
      parked: activity[4] / robotTicks,
    },
    deadlocks,
    deadlockRobotHoursLost: (lostTicks * tickSeconds) / 3600,
    delivered,
    openTasksCounted: open.length,
    stationIdle,
    stationStarved,
  };
}

function lowerBound(sorted: number[], value: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
