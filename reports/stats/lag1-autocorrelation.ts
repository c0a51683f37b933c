// lag1Autocorrelation: the sample autocorrelation at lag 1 (Box & Jenkins, Time Series
// Analysis, 1970, §2.1.6; R's `acf` uses the same estimator):
//   r1 = sum_{i=1..k-1} (X_i - mean)(X_{i+1} - mean) / sum_{i=1..k} (X_i - mean)^2.
// Batch-means intervals need nearly uncorrelated batch means; r1 is the usual check (Law &
// Kelton, Simulation Modeling and Analysis, ch. 9, *memory*).
//
// Example: [1, 2, 3, 4, 5] gives (2 + 0 + 0 + 2) / 10 = 0.4.
// Complexity: O(k).
// Too little data: fewer than 2 values, or all values equal (no variance), gives 0: there
// is no dependence to measure, and a constant series needs no merging.
export function lag1Autocorrelation(values: readonly number[]): number {
  const k = values.length;
  if (k < 2) return 0;
  let sum = 0;
  for (const value of values) sum += value;
  const mean = sum / k;
  let squares = 0;
  let products = 0;
  for (let i = 0; i < k; i += 1) {
    const deviation = values[i] - mean;
    squares += deviation * deviation;
    if (i + 1 < k) products += deviation * (values[i + 1] - mean);
  }
  // Relative test: a series equal up to rounding noise has no variance worth measuring.
  if (squares <= 1e-24 * Math.max(1, mean * mean) * k) return 0;
  return products / squares;
}
