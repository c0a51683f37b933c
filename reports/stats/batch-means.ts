// batchMeans: the method of non-overlapping batch means (Schmeiser, "Batch size
// effects in the analysis of simulation output", Operations Research 30(3):556-568,
// 1982). The series is split into `batches` consecutive batches of equal size
// floor(n / batches) and each batch's mean is returned, in time order.
//
// Leftover: when n is not a multiple of `batches`, the n mod batches leftover
// observations are dropped from the START of the series, not the end: the start is
// closest to the warm-up and so the most likely to be biased, while the tail is
// furthest from it. (Contrast mserCut, which batches from the start.)
//
// Complexity: O(n).
// Too little data: throws RangeError if `batches` is not a positive integer or the
// series has fewer observations than `batches` (batch size would be 0).
export function batchMeans(series: readonly number[], batches: number): number[] {
  if (!Number.isInteger(batches) || batches < 1) {
    throw new RangeError(`batchMeans: batches must be a positive integer, got ${batches}`);
  }
  const batchSize = Math.floor(series.length / batches);
  if (batchSize === 0) {
    throw new RangeError(
      `batchMeans: ${series.length} observations are too few for ${batches} batches (need at least one per batch)`,
    );
  }
  const leftover = series.length - batches * batchSize;
  const means = new Array<number>(batches);
  for (let batch = 0; batch < batches; batch += 1) {
    const start = leftover + batch * batchSize;
    let sum = 0;
    for (let offset = 0; offset < batchSize; offset += 1) {
      sum += series[start + offset];
    }
    means[batch] = sum / batchSize;
  }
  return means;
}
