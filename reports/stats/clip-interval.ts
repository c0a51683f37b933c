// clipInterval: limits an interval's ends to the range the quantity can take (fractions
// 0..1, counts and rates >= 0). If the true value lies in [lower, upper] and in [low, high],
// it lies in [max(low, lower), min(high, upper)], so clipping never lowers the coverage of
// an interval (common practice; the same argument as for truncating a confidence set to the
// parameter space). The mean and the half-width (the precision of the estimate) are left as
// they are, so after clipping low and high need not be mean ∓ halfWidth.
//
// Example: {mean: 0.01, halfWidth: 0.03, low: -0.02, high: 0.04} in [0, 1] -> low 0, high 0.04.
// Complexity: O(1). Null ends stay null.
import type { Interval } from './interval.ts';

export function clipInterval(interval: Interval, lower: number, upper: number): Interval {
  if (!(lower <= upper)) throw new RangeError(`clipInterval: lower ${lower} must not exceed upper ${upper}`);
  const clip = (v: number | null): number | null => (v === null ? null : Math.min(upper, Math.max(lower, v)));
  return { ...interval, low: clip(interval.low), high: clip(interval.high) };
}
