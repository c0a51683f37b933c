// batchMeansInterval: a confidence interval for a steady-state mean from the batch means of
// one long run, with the lag-1 check of Law & Kelton (Simulation Modeling and Analysis,
// ch. 9, *memory*): batch means must be nearly uncorrelated for the Student-t interval over
// them to hold, so while the lag-1 autocorrelation of the batch means exceeds
// `maximumLag1`, adjacent batches are merged (halving their number, doubling their size).
// If the correlation is still above the limit when a further merge would leave fewer than
// `minimumBatches`, the interval is returned but marked unreliable.
//
// The limits: 10 to 30 batches is the usual advice (Schmeiser, Operations Research 30(3),
// 1982); we start from 40 so that two merges remain before 10. A lag-1 correlation of 0.2
// means, for AR(1)-like dependence, a variance of the mean (1 + 0.2) / (1 - 0.2) = 1.5
// times the one the t interval assumes, a standard error understated by about 18%; we
// accept no more than that (common practice: "small" is not fixed by the source).
// Only positive correlation merges: negative correlation makes the interval wider than
// needed, not narrower.
//
// Complexity: O(k) per merge, O(k) in all.
// Too little data: fewer than 2 batch means give a null half-width (see intervalOf) and
// reliable false.
import type { Interval } from './interval.ts';
import { intervalOf } from './interval-of.ts';
import { lag1Autocorrelation } from './lag1-autocorrelation.ts';
import { mergeAdjacentBatches } from './merge-adjacent-batches.ts';

export interface BatchMeansRule {
  initialBatches: number;
  minimumBatches: number;
  maximumLag1: number;
}

export const batchMeansRule: BatchMeansRule = { initialBatches: 40, minimumBatches: 10, maximumLag1: 0.2 };

export interface BatchMeansResult {
  /** Student-t interval over the batch means that passed the check (or the last ones tried). */
  interval: Interval;
  initialBatches: number;
  /** Lag-1 autocorrelation and half-width before any merging. */
  initialLag1: number;
  initialHalfWidth: number | null;
  batches: number;
  lag1: number;
  /** The lag-1 correlation is at most the limit with at least `minimumBatches` batches. */
  reliable: boolean;
}

export function batchMeansInterval(batchValues: readonly number[], confidence: number, rule: BatchMeansRule = batchMeansRule): BatchMeansResult {
  if (batchValues.length === 0) throw new RangeError('batchMeansInterval: no batch means');
  let values = [...batchValues];
  let lag1 = lag1Autocorrelation(values);
  const initialLag1 = lag1;
  const initialHalfWidth = intervalOf(values, confidence).halfWidth;
  while (lag1 > rule.maximumLag1 && Math.floor(values.length / 2) >= rule.minimumBatches) {
    values = mergeAdjacentBatches(values);
    lag1 = lag1Autocorrelation(values);
  }
  return {
    interval: intervalOf(values, confidence),
    initialBatches: batchValues.length,
    initialLag1,
    initialHalfWidth,
    batches: values.length,
    lag1,
    reliable: lag1 <= rule.maximumLag1 && values.length >= rule.minimumBatches,
  };
}
