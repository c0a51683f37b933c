// quantileSorted: the sample p-quantile by linear interpolation between order
// statistics, definition 7 of Hyndman & Fan, "Sample quantiles in statistical
// packages", The American Statistician 50(4):361-365, 1996 (R's default `quantile`
// type, numpy's default "linear"):  h = (n - 1)·p,  Q = x[floor h] + (h - floor h)·(x[floor h + 1] - x[floor h]).
// The input must already be sorted ascending (not checked); any ArrayLike works,
// including Float64Array.
//
// Complexity: O(1).
// Too little data: throws RangeError on an empty array or p outside [0, 1] (or NaN).
// A single value is every quantile.
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) {
    throw new RangeError('quantileSorted: cannot take a quantile of an empty array');
  }
  if (!(p >= 0 && p <= 1)) {
    throw new RangeError(`quantileSorted: p must be between 0 and 1, got ${p}`);
  }
  const position = (n - 1) * p;
  const lowerIndex = Math.floor(position);
  const fraction = position - lowerIndex;
  const lower = sorted[lowerIndex];
  if (fraction === 0) {
    return lower;
  }
  return lower + fraction * (sorted[lowerIndex + 1] - lower);
}
