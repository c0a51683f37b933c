// intervalOf: the classical Student-t confidence interval for a mean,
//   mean ± t(1 - alpha/2, n - 1) · s / sqrt(n),
// with s the SAMPLE standard deviation (divisor n - 1, simple-statistics
// `sampleStandardDeviation`) — see e.g. NIST/SEMATECH e-Handbook of Statistical
// Methods §7.2.2.1, or Law, Simulation Modeling and Analysis (5th ed.) §4.5.
// The values are assumed independent and identically distributed (e.g. one summary
// per independent replication, or batch means).
//
// Complexity: O(n).
// Too little data: n = 0 throws RangeError; n = 1 returns the value as the mean with
// halfWidth/low/high null (no variance estimate). All values equal gives halfWidth
// exactly 0 and mean exactly that value (checked explicitly, because the floating
// point mean of e.g. [0.1, 0.1, 0.1] is 0.10000000000000002 and its sd ~1.7e-17).
// Non-finite values are not rejected; they propagate into NaN/Infinity results.
import { mean, sampleStandardDeviation } from 'simple-statistics';
import { checkConfidence } from './check-confidence.ts';
import type { Interval } from './interval.ts';
import { tQuantile } from './t-quantile.ts';

export function intervalOf(values: readonly number[], confidence = 0.95): Interval {
  checkConfidence(confidence, 'intervalOf');
  const n = values.length;
  if (n === 0) {
    throw new RangeError('intervalOf: cannot form an interval from an empty list of values');
  }
  const first = values[0];
  if (n === 1) {
    return { mean: first, halfWidth: null, low: null, high: null, n };
  }
  const allEqual = values.every((value) => value === first);
  const sampleMean = allEqual ? first : mean(values);
  const standardDeviation = allEqual ? 0 : sampleStandardDeviation(values);
  const halfWidth = (tQuantile(1 - (1 - confidence) / 2, n - 1) * standardDeviation) / Math.sqrt(n);
  return { mean: sampleMean, halfWidth, low: sampleMean - halfWidth, high: sampleMean + halfWidth, n };
}
