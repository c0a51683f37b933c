// mserStatistics: White's Marginal Standard Error Rule statistic for every candidate
// truncation point (White 1997, "An effective truncation heuristic for bias reduction
// in simulation output", Simulation 69(6):323-334; White, Cobb & Spratt, "A comparison
// of five steady-state truncation heuristics for simulation", WSC 2000):
//   MSER(d) = sum_{i=d+1..m} (Z_i - mean(Z_{d+1..m}))^2 / (m - d)^2,  d = 0 .. floor(m/2),
// where Z_1..Z_m are the (batch) observations. Entry d of the result is MSER(d).
//
// The suffix sums of squared deviations are accumulated from the end of the series
// backwards with Welford's update (Welford 1962, Technometrics 4(3)), which is the
// numerically stable form of "suffix sum minus suffix sum of squares": it does not
// cancel catastrophically when the observations sit on a large offset.
//
// Complexity: O(m) time, O(m) memory.
// Too little data: an empty series gives []; a single observation gives [0].
export function mserStatistics(observations: readonly number[]): number[] {
  const m = observations.length;
  if (m === 0) {
    return [];
  }
  const largestCut = Math.floor(m / 2);
  const statistics = new Array<number>(largestCut + 1);
  let suffixMean = 0;
  let suffixSquaredDeviations = 0;
  for (let index = m - 1; index >= 0; index -= 1) {
    const count = m - index;
    const value = observations[index];
    const delta = value - suffixMean;
    suffixMean += delta / count;
    suffixSquaredDeviations += delta * (value - suffixMean);
    if (index <= largestCut) {
      statistics[index] = suffixSquaredDeviations / (count * count);
    }
  }
  return statistics;
}
