/**
 * Is the backlog bounded? With offered work above what the fleet delivers, the number of
 * tasks in system grows about linearly in time, at lambda - mu in the fluid approximation
 * of an overloaded queue (Chen & Yao, Fundamentals of Queueing Networks, 2001, ch. 5,
 * *memory*; Newell, Applications of Queueing Theory, 1982, *memory*); in a stable run it
 * has no trend. So the test is the trend of the time-average tasks in system per sample
 * interval after the warm-up (REFERENCES.md "Stability of a queue-like run", common
 * practice):
 *
 * - per replication: the least-squares slope in tasks per hour with an interval from the
 *   regression on batch means, batches merged until their residuals' lag-1 correlation is
 *   small (reports/stats/batched-slope-interval.ts);
 * - over replications: the Student-t interval of the replications' slopes (independent
 *   replications), or the one replication's own interval.
 *
 * Verdict: a run is unstable when its growth is significant (the interval lies above 0) and
 * material (above `materialGrowthShare` of the tasks it delivers per hour: a backlog
 * growing by less than 1% of the hourly volume cannot be told apart from the slow drift of
 * a stable but busy queue in runs of a few hours, nor from the shape of an hourly demand
 * profile). Over replications the run is unstable when the pooled interval says so, or
 * when every replication on its own does (under a bounded backlog each does so with
 * probability at most alpha/2, so all of them together almost never).
 *
 * Trace demand: the trend is measured while the trace still releases tasks (up to the
 * interval of its last release); after that the backlog only drains, whatever the fleet.
 * Saturated (capacity) runs keep an artificial pool: no verdict (null).
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { intervalLengthOf } from '../sim/metrics.ts';
import { batchedSlopeInterval, intervalOf, type Interval } from './stats/index.ts';

/** Growth below this share of the delivered rate is not called unstable (see above). */
export const materialGrowthShare = 0.01;

export interface ReplicationTrend {
  replication: number;
  /** Tasks per hour; NaN when the window is too short for a trend. */
  growthPerHour: number;
  low: number | null;
  high: number | null;
  batches: number;
  /** Lag-1 correlation of the regression residuals over the batches used. */
  lag1: number;
  reliable: boolean;
  stable: boolean;
}

/**
 * `stable`: the growth interval lies below the material growth (a bounded backlog is shown);
 * `unstable`: material, significant growth; `undetermined`: neither (the interval is too wide
 * to tell: more replications or longer runs decide); null for capacity runs.
 */
export type StabilityVerdict = 'stable' | 'unstable' | 'undetermined' | null;

export interface StabilityReport {
  /** False only when growth is shown (see `verdict`); true otherwise; null for capacity runs. */
  stable: boolean | null;
  verdict: StabilityVerdict;
  backlogGrowthPerHour: Interval;
  /** Growth (tasks/h) above which a significant trend counts as unstable. */
  materialGrowthPerHour: number;
  /** Window the trend was measured on, seconds from the start. */
  fromSeconds: number;
  toSeconds: number;
  perReplication: ReplicationTrend[];
}

const nullInterval = (): Interval => ({ mean: NaN, halfWidth: null, low: null, high: null, n: 0 });

/** Whole sample intervals [from, to) the trend is measured on. */
export function trendWindow(scenario: Scenario, record: ReplicationRecord, cutIntervals: number): { from: number; to: number } {
  const m = record.metrics;
  let to = Math.floor(record.endTick / m.intervalTicks);
  if (scenario.demand.kind === 'trace') {
    const tasks = scenario.demand.tasks;
    const lastRelease = tasks.length > 0 ? tasks[tasks.length - 1].releaseSeconds : 0;
    const lastTick = Math.floor(lastRelease / record.tickSeconds + 1e-9);
    to = Math.min(to, Math.floor(lastTick / m.intervalTicks) + 1);
  }
  return { from: cutIntervals, to: Math.max(cutIntervals, to) };
}

export function replicationTrend(record: ReplicationRecord, from: number, to: number, throughputPerHour: number, confidence: number): ReplicationTrend {
  const m = record.metrics;
  const hoursPerInterval = (m.intervalTicks * record.tickSeconds) / 3600;
  const times: number[] = [];
  const inSystem: number[] = [];
  for (let i = from; i < to; i++) {
    times.push((i + 0.5) * hoursPerInterval);
    inSystem.push(m.tasksInSystemArea[i] / intervalLengthOf(m, i));
  }
  const floor = materialGrowthShare * Math.max(0, Number.isFinite(throughputPerHour) ? throughputPerHour : 0);
  if (times.length < 3) {
    return { replication: record.replication, growthPerHour: NaN, low: null, high: null, batches: times.length, lag1: 0, reliable: false, stable: true };
  }
  const trend = batchedSlopeInterval(times, inSystem, confidence);
  const growth = trend.fit.slope;
  const unstable = growth > floor && (trend.fit.low === null || trend.fit.low > 0);
  return {
    replication: record.replication,
    growthPerHour: growth,
    low: trend.fit.low,
    high: trend.fit.high,
    batches: trend.batches,
    lag1: trend.lag1,
    reliable: trend.reliable,
    stable: !unstable,
  };
}

/** `throughputs[i]`: tasks per hour delivered by replication i in the same window. */
export function assessStability(scenario: Scenario, records: ReplicationRecord[], cutIntervals: number, throughputs: number[]): StabilityReport {
  const confidence = scenario.run.confidence;
  const first = records[0];
  const window = trendWindow(scenario, first, cutIntervals);
  const secondsPerInterval = first.metrics.intervalTicks * first.tickSeconds;
  const base = { fromSeconds: window.from * secondsPerInterval, toSeconds: window.to * secondsPerInterval };
  if (scenario.demand.kind === 'saturated') {
    return { stable: null, verdict: null, backlogGrowthPerHour: nullInterval(), materialGrowthPerHour: NaN, ...base, perReplication: [] };
  }
  const perReplication = records.map((record, i) => replicationTrend(record, window.from, window.to, throughputs[i], confidence));
  return { ...pooledStability(perReplication, throughputs, confidence), ...base, perReplication };
}

/** The trend of one replication as far as the verdict over replications reads it (a sweep's run lines carry these). */
export type TrendVerdict = Pick<ReplicationTrend, 'growthPerHour' | 'low' | 'high' | 'stable'>;

/**
 * The verdict over replications from each replication's own trend and delivered rate
 * (tasks per hour): the rule above, used by `run` and, over a parameter point's run lines,
 * by the sweep tables.
 */
export function pooledStability(
  perReplication: readonly TrendVerdict[],
  throughputs: readonly number[],
  confidence: number,
): { stable: boolean; verdict: Exclude<StabilityVerdict, null>; backlogGrowthPerHour: Interval; materialGrowthPerHour: number } {
  const growths = perReplication.map((t) => t.growthPerHour).filter((g) => Number.isFinite(g));
  const finiteThroughputs = throughputs.filter((v) => Number.isFinite(v));
  const meanThroughput = finiteThroughputs.length > 0 ? finiteThroughputs.reduce((s, v) => s + v, 0) / finiteThroughputs.length : 0;
  const materialGrowthPerHour = materialGrowthShare * meanThroughput;
  if (growths.length === 0) return { stable: true, verdict: 'undetermined', backlogGrowthPerHour: nullInterval(), materialGrowthPerHour };
  let pooled: Interval;
  if (perReplication.length === 1) {
    const t = perReplication[0];
    pooled = { mean: t.growthPerHour, halfWidth: t.low === null ? null : (t.high! - t.low) / 2, low: t.low, high: t.high, n: 1 };
  } else {
    pooled = intervalOf(growths, confidence);
  }
  const pooledUnstable = pooled.mean > materialGrowthPerHour && pooled.low !== null && pooled.low > 0;
  const everyReplicationUnstable = perReplication.length > 1 && perReplication.every((t) => !t.stable);
  const unstable = pooledUnstable || everyReplicationUnstable;
  const shownBounded = pooled.high !== null && pooled.high <= materialGrowthPerHour;
  const verdict: StabilityVerdict = unstable ? 'unstable' : shownBounded ? 'stable' : 'undetermined';
  return { stable: !unstable, verdict, backlogGrowthPerHour: pooled, materialGrowthPerHour };
}
