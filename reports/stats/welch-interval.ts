// welchInterval: the unpaired two-sample confidence interval for mean(a) - mean(b)
// without assuming equal variances (Welch, Biometrika 34, 1947), with the
// Welch-Satterthwaite approximate degrees of freedom (Satterthwaite, Biometrics
// Bulletin 2, 1946; Law, Simulation Modeling and Analysis, 5th ed., §10.2.2):
//   se^2 = s_a^2/n_a + s_b^2/n_b,
//   df   = se^4 / ((s_a^2/n_a)^2/(n_a - 1) + (s_b^2/n_b)^2/(n_b - 1)),
//   mean(a) - mean(b) ± t(1 - alpha/2, df)·se,
// with s^2 the SAMPLE variance (divisor n - 1). Use it for independent runs; under
// common random numbers pairedDifferenceInterval is valid and usually much narrower.
// The returned n is n_a + n_b.
//
// Complexity: O(n_a + n_b).
// Too little data: throws RangeError if either sample is empty; if either sample has a
// single value its variance cannot be estimated and halfWidth/low/high are null.
// If both samples are constant, halfWidth is exactly 0.
import { mean, sampleVariance } from 'simple-statistics';
import { checkConfidence } from './check-confidence.ts';
import type { Interval } from './interval.ts';
import { tQuantile } from './t-quantile.ts';

export function welchInterval(a: readonly number[], b: readonly number[], confidence: number): Interval {
  checkConfidence(confidence, 'welchInterval');
  if (a.length === 0 || b.length === 0) {
    throw new RangeError(
      `welchInterval: both samples need at least one value, got ${a.length} and ${b.length}`,
    );
  }
  const n = a.length + b.length;
  const constantA = a.every((value) => value === a[0]);
  const constantB = b.every((value) => value === b[0]);
  const difference = (constantA ? a[0] : mean(a)) - (constantB ? b[0] : mean(b));
  if (a.length < 2 || b.length < 2) {
    return { mean: difference, halfWidth: null, low: null, high: null, n };
  }
  const varianceOfMeanA = (constantA ? 0 : sampleVariance(a)) / a.length;
  const varianceOfMeanB = (constantB ? 0 : sampleVariance(b)) / b.length;
  const varianceOfDifference = varianceOfMeanA + varianceOfMeanB;
  if (varianceOfDifference === 0) {
    return { mean: difference, halfWidth: 0, low: difference, high: difference, n };
  }
  const degreesOfFreedom =
    (varianceOfDifference * varianceOfDifference) /
    ((varianceOfMeanA * varianceOfMeanA) / (a.length - 1) + (varianceOfMeanB * varianceOfMeanB) / (b.length - 1));
  const halfWidth = tQuantile(1 - (1 - confidence) / 2, degreesOfFreedom) * Math.sqrt(varianceOfDifference);
  return { mean: difference, halfWidth, low: difference - halfWidth, high: difference + halfWidth, n };
}
