/**
 * The interval rules every reported figure follows, in one place, so that the run summary
 * (reports/summary.ts) and the sweep tables (reports/sweep-point.ts) cannot drift apart:
 *
 * - a figure's interval is clipped to the range the quantity can take: shares to [0, 1],
 *   counts, rates and times to >= 0, a trend (backlog growth) not at all
 *   (reports/stats/clip-interval.ts: if the true value is in the range and in the interval,
 *   it is in the clipped interval, so coverage never drops; common practice);
 * - counts per replication (deadlocks, robot-hours lost, whole-run rates) come from the
 *   replications only, so one replication gives the value and no interval;
 * - lead times of an unstable run are lower bounds (the backlog grows): the mean, no
 *   interval (DESIGN §7).
 */
import { clipInterval, intervalOf, type Interval } from './stats/index.ts';

/** The range a figure can take. */
export type Bounds = 'fraction' | 'nonNegative' | 'none';

export function bounded(interval: Interval, bounds: Bounds): Interval {
  if (bounds === 'fraction') return clipInterval(interval, 0, 1);
  if (bounds === 'nonNegative') return clipInterval(interval, 0, Infinity);
  return interval;
}

/** A value without an honest interval. */
export const noInterval = (mean: number, n: number): Interval => ({ mean, halfWidth: null, low: null, high: null, n });

/**
 * Student-t interval over one value per replication (non-finite values left out), within
 * its bounds; no value gives a NaN mean with n = 0, one value the value and no interval.
 */
export function replicationInterval(values: readonly number[], confidence: number, bounds: Bounds): Interval {
  const finite = values.filter((v) => Number.isFinite(v));
  if (finite.length === 0) return noInterval(NaN, 0);
  return bounded(intervalOf(finite, confidence), bounds);
}

/** Lead time of an unstable run: the mean of the replications' (lower-bound) values, no interval. */
export function unstableLeadTime(values: readonly number[]): Interval {
  const finite = values.filter((v) => Number.isFinite(v));
  return noInterval(finite.length > 0 ? finite.reduce((s, v) => s + v, 0) / finite.length : NaN, finite.length);
}
