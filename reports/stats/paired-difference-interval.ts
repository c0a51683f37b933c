// pairedDifferenceInterval: the paired-t confidence interval for the mean of
// D_i = a_i - b_i, with t(1 - alpha/2, n - 1) (Law, Simulation Modeling and Analysis,
// 5th ed., §10.2.1 "paired-t confidence interval"). It is the right interval when
// run i of system a and run i of system b share random numbers (common random
// numbers): the positive correlation they induce cancels in the difference and
// narrows the interval compared with welchInterval.
//
// Complexity: O(n).
// Too little data: throws RangeError if the lengths differ or are 0; one pair gives
// halfWidth/low/high null (see intervalOf).
import type { Interval } from './interval.ts';
import { intervalOf } from './interval-of.ts';

export function pairedDifferenceInterval(a: readonly number[], b: readonly number[], confidence: number): Interval {
  if (a.length !== b.length) {
    throw new RangeError(
      `pairedDifferenceInterval: paired samples must have the same length, got ${a.length} and ${b.length}`,
    );
  }
  if (a.length === 0) {
    throw new RangeError('pairedDifferenceInterval: cannot form an interval from empty samples');
  }
  const differences = a.map((value, index) => value - b[index]);
  return intervalOf(differences, confidence);
}
