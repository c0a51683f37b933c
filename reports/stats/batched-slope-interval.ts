// batchedSlopeInterval: the trend (least-squares slope) of a correlated series with an
// interval that allows for the correlation: the series is cut into batches, the slope is
// fitted to the batch means (slopeInterval, t with k - 2 degrees of freedom), and while the
// lag-1 autocorrelation of the fit's residuals exceeds the limit, adjacent batches are
// merged, as batchMeansInterval does for a mean (Law & Kelton, Simulation Modeling and
// Analysis, ch. 9, *memory*; batch means of a regression: the same argument, applied to
// the residuals). Used for the backlog trend of a run (reports/stability.ts).
//
// Leftover observations (n not a multiple of the batch count) are dropped at the start, as
// in batchMeans. Complexity O(n).
// Too little data: fewer than 2 observations throw RangeError; 2 batches give the slope with
// a null half-width; reliable needs at least `minimumBatches` batches.
import { batchMeans } from './batch-means.ts';
import { batchMeansRule, type BatchMeansRule } from './batch-means-interval.ts';
import { lag1Autocorrelation } from './lag1-autocorrelation.ts';
import { mergeAdjacentBatches } from './merge-adjacent-batches.ts';
import { slopeInterval, type SlopeInterval } from './slope-interval.ts';

export interface BatchedSlopeResult {
  fit: SlopeInterval;
  initialBatches: number;
  initialLag1: number;
  batches: number;
  lag1: number;
  reliable: boolean;
}

export function batchedSlopeInterval(x: readonly number[], y: readonly number[], confidence: number, rule: BatchMeansRule = batchMeansRule): BatchedSlopeResult {
  if (x.length !== y.length) throw new RangeError(`batchedSlopeInterval: x and y must have the same length, got ${x.length} and ${y.length}`);
  if (x.length < 2) throw new RangeError(`batchedSlopeInterval: need at least 2 observations, got ${x.length}`);
  const initialBatches = Math.min(rule.initialBatches, x.length);
  let bx = batchMeans(x, initialBatches);
  let by = batchMeans(y, initialBatches);
  let fit = slopeInterval(bx, by, confidence);
  let lag1 = lag1Autocorrelation(fit.residuals);
  const initialLag1 = lag1;
  while (lag1 > rule.maximumLag1 && Math.floor(bx.length / 2) >= rule.minimumBatches) {
    bx = mergeAdjacentBatches(bx);
    by = mergeAdjacentBatches(by);
    fit = slopeInterval(bx, by, confidence);
    lag1 = lag1Autocorrelation(fit.residuals);
  }
  return { fit, initialBatches, initialLag1, batches: bx.length, lag1, reliable: lag1 <= rule.maximumLag1 && bx.length >= rule.minimumBatches && fit.halfWidth !== null };
}
