// mergeAdjacentBatches: halves the number of batches by averaging batches 2j and 2j+1 (equal
// sizes, so the average is the mean of the merged batch). With an odd count the first batch
// is dropped, as batchMeans drops its leftover at the start: the start is nearest to the
// warm-up and so the most likely to be biased.
//
// Example: [1, 3, 5, 7, 9] -> [4, 8] (1 dropped).
// Complexity: O(k). An empty or one-element list gives [].
export function mergeAdjacentBatches(values: readonly number[]): number[] {
  const start = values.length % 2;
  const merged: number[] = [];
  for (let i = start; i + 1 < values.length; i += 2) merged.push((values[i] + values[i + 1]) / 2);
  return merged;
}
