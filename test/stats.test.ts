import { describe, expect, it } from 'vitest';
import { mean as referenceMean, quantileSorted as simpleStatisticsQuantileSorted, sampleStandardDeviation } from 'simple-statistics';
import jStat from 'jstat';
import {
  batchMeans,
  batchMeansInterval,
  batchedSlopeInterval,
  bonferroniConfidence,
  clipInterval,
  intervalOf,
  lag1Autocorrelation,
  mergeAdjacentBatches,
  slopeInterval,
  mserCut,
  mserStatistics,
  pairedDifferenceInterval,
  quantileSorted,
  tQuantile,
  welchInterval,
} from '../reports/stats/index.ts';

// Small deterministic generator (mulberry32, public-domain by Tommy Ettinger) so the
// tests need no seed library and are reproducible.
function randomSource(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let mixed = state;
    mixed = Math.imul(mixed ^ (mixed >>> 15), mixed | 1);
    mixed ^= mixed + Math.imul(mixed ^ (mixed >>> 7), mixed | 61);
    return ((mixed ^ (mixed >>> 14)) >>> 0) / 4294967296;
  };
}

// Direct O(m^2) evaluation of White's (1997) MSER formula, written independently of
// the O(m) implementation: MSER(d) = sum_{i>d} (Z_i - mean_{i>d})^2 / (m - d)^2.
function bruteForceMser(observations: readonly number[]): number[] {
  const m = observations.length;
  const statistics: number[] = [];
  for (let d = 0; d <= Math.floor(m / 2); d += 1) {
    const kept = observations.slice(d);
    const keptMean = kept.reduce((sum, value) => sum + value, 0) / kept.length;
    const squaredDeviations = kept.reduce((sum, value) => sum + (value - keptMean) ** 2, 0);
    statistics.push(squaredDeviations / (m - d) ** 2);
  }
  return statistics;
}

function bruteForceBatchesFromStart(series: readonly number[], batchSize: number): number[] {
  const means: number[] = [];
  for (let start = 0; start + batchSize <= series.length; start += batchSize) {
    means.push(series.slice(start, start + batchSize).reduce((sum, value) => sum + value, 0) / batchSize);
  }
  return means;
}

describe('tQuantile', () => {
  // Expected values: NIST/SEMATECH e-Handbook of Statistical Methods, table 1.3.6.7.2
  // "Critical values of Student's t distribution", columns upper-tail 0.025 and 0.05.
  const nistTable: Array<[number, number, number]> = [
    [1, 12.706, 6.314], // NIST 1.3.6.7.2, df 1
    [2, 4.303, 2.92], // NIST 1.3.6.7.2, df 2
    [4, 2.776, 2.132], // NIST 1.3.6.7.2, df 4
    [7, 2.365, 1.895], // NIST 1.3.6.7.2, df 7
    [8, 2.306, 1.86], // NIST 1.3.6.7.2, df 8
    [9, 2.262, 1.833], // NIST 1.3.6.7.2, df 9
    [19, 2.093, 1.729], // NIST 1.3.6.7.2, df 19
    [29, 2.045, 1.699], // NIST 1.3.6.7.2, df 29
    [Infinity, 1.96, 1.645], // NIST 1.3.6.7.2, df infinity (normal)
  ];
  for (const [degreesOfFreedom, upper0025, upper005] of nistTable) {
    it(`matches NIST at df ${degreesOfFreedom}`, () => {
      expect(tQuantile(0.975, degreesOfFreedom)).toBeCloseTo(upper0025, 3);
      expect(tQuantile(0.95, degreesOfFreedom)).toBeCloseTo(upper005, 3);
      expect(tQuantile(0.025, degreesOfFreedom)).toBeCloseTo(-upper0025, 3);
    });
  }

  it('is continuous into the large-degrees-of-freedom expansion and tends to the normal', () => {
    const justBelow = tQuantile(0.975, 1e6);
    const justAbove = tQuantile(0.975, 1e6 + 1);
    expect(Math.abs(justBelow - justAbove)).toBeLessThan(1e-7);
    // 1.959963984540054: standard normal 0.975 quantile (Abramowitz & Stegun table 26.5 / R qnorm)
    expect(tQuantile(0.975, 1e12)).toBeCloseTo(1.959963984540054, 9);
    expect(tQuantile(0.975, 1e300)).toBeCloseTo(1.959963984540054, 9);
    expect(tQuantile(0.5, 7)).toBeCloseTo(0, 12);
  });

  it('rejects p outside (0, 1) and non-positive degrees of freedom', () => {
    expect(() => tQuantile(0, 5)).toThrow(RangeError);
    expect(() => tQuantile(1, 5)).toThrow(RangeError);
    expect(() => tQuantile(Number.NaN, 5)).toThrow(RangeError);
    expect(() => tQuantile(0.9, 0)).toThrow(RangeError);
    expect(() => tQuantile(0.9, Number.NaN)).toThrow(RangeError);
  });
});

describe('intervalOf', () => {
  const values = [2, 4, 4, 4, 5, 5, 7, 9];
  // Sum of squared deviations from the mean 5 is 9+1+1+1+0+0+4+16 = 32 (by hand).
  const sampleStandardDeviation = Math.sqrt(32 / 7);
  const populationStandardDeviation = Math.sqrt(32 / 8);
  const nistT7 = 2.365; // NIST e-Handbook table 1.3.6.7.2, df 7, upper tail 0.025

  it('gives mean ± t·s/sqrt(n) with the sample standard deviation', () => {
    const interval = intervalOf(values, 0.95);
    const expectedHalfWidth = (nistT7 * sampleStandardDeviation) / Math.sqrt(8); // ≈ 1.788
    expect(interval.mean).toBe(5);
    expect(interval.n).toBe(8);
    expect(interval.halfWidth).toBeCloseTo(expectedHalfWidth, 3);
    expect(interval.low).toBeCloseTo(5 - expectedHalfWidth, 3);
    expect(interval.high).toBeCloseTo(5 + expectedHalfWidth, 3);
    // The population (divide by n) version would be ≈ 1.672: must NOT match.
    const populationHalfWidth = (nistT7 * populationStandardDeviation) / Math.sqrt(8);
    expect(Math.abs((interval.halfWidth ?? 0) - populationHalfWidth)).toBeGreaterThan(0.1);
  });

  it('uses confidence 0.95 by default and widens with confidence', () => {
    // Default level: the NIST df-7 value 2.365, not a call compared with itself.
    expect(intervalOf(values).halfWidth).toBeCloseTo((nistT7 * sampleStandardDeviation) / Math.sqrt(8), 3);
    // 99%: NIST 1.3.6.7.2, df 7, upper tail 0.005 is 3.499
    expect(intervalOf(values, 0.99).halfWidth).toBeCloseTo((3.499 * sampleStandardDeviation) / Math.sqrt(8), 3);
    // 90%: NIST 1.3.6.7.2, df 7, upper tail 0.05 is 1.895
    expect(intervalOf(values, 0.9).halfWidth).toBeCloseTo((1.895 * sampleStandardDeviation) / Math.sqrt(8), 3);
  });

  it('handles one value, equal values and no values', () => {
    expect(intervalOf([3.5])).toEqual({ mean: 3.5, halfWidth: null, low: null, high: null, n: 1 });
    expect(intervalOf([0.1, 0.1, 0.1])).toEqual({ mean: 0.1, halfWidth: 0, low: 0.1, high: 0.1, n: 3 });
    expect(() => intervalOf([])).toThrow(RangeError);
    expect(() => intervalOf([])).toThrow(/empty/);
    expect(() => intervalOf(values, 1)).toThrow(RangeError);
    expect(() => intervalOf(values, 0)).toThrow(RangeError);
  });
});

describe('mserStatistics and mserCut', () => {
  it('matches a direct O(m^2) evaluation of White\'s formula on random series', () => {
    const random = randomSource(12345);
    for (let trial = 0; trial < 50; trial += 1) {
      const length = 1 + Math.floor(random() * 120);
      const offset = trial % 2 === 0 ? 0 : 1e6; // a large offset stresses cancellation
      const series = Array.from({ length }, (_, index) => offset + random() * 10 + (index < length / 5 ? 5 * random() : 0));
      const fast = mserStatistics(series);
      const slow = bruteForceMser(series);
      expect(fast.length).toBe(slow.length);
      for (let d = 0; d < slow.length; d += 1) {
        expect(fast[d]).toBeCloseTo(slow[d], 9);
        expect(Math.abs(fast[d] - slow[d])).toBeLessThanOrEqual(1e-9 * Math.max(1, slow[d]));
      }
    }
  });

  it('chooses the brute-force minimizer (smallest d on ties) on random series', () => {
    const random = randomSource(777);
    for (let trial = 0; trial < 50; trial += 1) {
      const length = 50 + Math.floor(random() * 500);
      const series = Array.from({ length }, (_, index) => random() + 3 * Math.exp(-index / (10 + trial)));
      const slow = bruteForceMser(bruteForceBatchesFromStart(series, 5));
      let expectedCut = 0;
      slow.forEach((value, d) => {
        if (value < slow[expectedCut]) expectedCut = d;
      });
      const result = mserCut(series);
      expect(result.batches).toBe(Math.floor(length / 5));
      expect(result.cutBatches).toBe(expectedCut);
      expect(result.cutObservations).toBe(expectedCut * 5);
    }
  });

  it('cuts an obvious initial transient at about its end', () => {
    // 100 observations at 0, then 900 at 10 with small deterministic noise
    const series = Array.from({ length: 1000 }, (_, index) => (index < 100 ? 0 : 10 + 0.3 * Math.sin(index * 1.7)));
    const result = mserCut(series);
    expect(result.cutObservations % 5).toBe(0);
    expect(result.cutObservations).toBeGreaterThanOrEqual(95);
    expect(result.cutObservations).toBeLessThanOrEqual(110);
    expect(result.batches).toBe(200);
    expect(result.tooShort).toBe(false);
  });

  it('cuts a stationary series near 0', () => {
    const random = randomSource(2024);
    const series = Array.from({ length: 2000 }, () => 5 + random());
    const result = mserCut(series);
    expect(result.cutObservations).toBeLessThanOrEqual(100); // at most 5% of the run
    expect(result.tooShort).toBe(false);
    const constant = mserCut(new Array<number>(100).fill(4));
    expect(constant.cutObservations).toBe(0); // all statistics tie at 0 -> smallest d
    expect(constant.tooShort).toBe(false);
  });

  it('reports tooShort for a series that keeps trending', () => {
    const series = Array.from({ length: 1000 }, (_, index) => index * 0.01 + 0.05 * Math.sin(index));
    const result = mserCut(series);
    expect(result.tooShort).toBe(true);
    expect(result.cutBatches).toBeGreaterThanOrEqual(0.9 * Math.floor(result.batches / 2));
  });

  it('handles empty, short and ragged series', () => {
    expect(mserCut([])).toEqual({ cutObservations: 0, batches: 0, cutBatches: 0, tooShort: true });
    expect(mserCut([1, 2, 3])).toEqual({ cutObservations: 0, batches: 0, cutBatches: 0, tooShort: true });
    expect(mserCut(Array.from({ length: 49 }, (_, index) => index % 3)).tooShort).toBe(true); // 9 batches
    expect(mserCut(Array.from({ length: 53 }, (_, index) => index % 3)).batches).toBe(10); // tail of 3 dropped
    expect(mserStatistics([])).toEqual([]);
    expect(mserStatistics([7])).toEqual([0]);
    expect(() => mserCut([1, 2, 3], 0)).toThrow(RangeError);
    expect(() => mserCut([1, 2, 3], 2.5)).toThrow(RangeError);
  });
});

describe('batchMeans', () => {
  it('averages equal consecutive batches, dropping the leftover at the start', () => {
    // 11 values, 3 batches: size floor(11/3) = 3, leftover 2 dropped from the start (by hand)
    const series = [100, 200, 1, 2, 3, 4, 5, 6, 7, 8, 9];
    expect(batchMeans(series, 3)).toEqual([2, 5, 8]);
    expect(batchMeans([1, 2, 3, 4], 2)).toEqual([1.5, 3.5]);
    expect(batchMeans([1, 2, 3, 4], 1)).toEqual([2.5]);
  });

  it('rejects too few observations and bad batch counts', () => {
    expect(() => batchMeans([1, 2], 3)).toThrow(RangeError);
    expect(() => batchMeans([1, 2, 3], 0)).toThrow(RangeError);
    expect(() => batchMeans([1, 2, 3], 1.5)).toThrow(RangeError);
  });
});

describe('pairedDifferenceInterval', () => {
  it('matches the boys\' shoes worked example (Box, Hunter & Hunter, Statistics for Experimenters, 1978, ch. 4)', () => {
    // Sole wear of materials A and B, one shoe of each on 10 boys (the published data set).
    const materialB = [14.0, 8.8, 11.2, 14.2, 11.8, 6.4, 9.8, 11.3, 9.3, 13.6];
    const materialA = [13.2, 8.2, 10.9, 14.3, 10.7, 6.6, 9.5, 10.8, 8.8, 13.3];
    // By hand: d = B - A = 0.8 0.6 0.3 -0.1 1.1 -0.2 0.3 0.5 0.5 0.3, mean 0.41,
    // sum d^2 = 3.03, s^2 = (3.03 - 10 * 0.41^2) / 9 = 0.149889, s = 0.387155,
    // se = s / sqrt(10) = 0.122429 (t = 0.41 / 0.1224 = 3.35; the book reports 3.4, *memory*);
    // 95%: t(0.975, 9) = 2.262 (NIST 1.3.6.7.2) gives half-width 0.27693, interval 0.1331 .. 0.6869.
    const interval = pairedDifferenceInterval(materialB, materialA, 0.95);
    expect(interval.n).toBe(10);
    expect(interval.mean).toBeCloseTo(0.41, 10);
    expect(interval.halfWidth).toBeCloseTo(0.27693, 3);
    expect(interval.low).toBeCloseTo(0.1331, 3);
    expect(interval.high).toBeCloseTo(0.6869, 3);
    // Unpaired, the boy-to-boy spread swamps the difference: Welch's half-width is far larger.
    expect(welchInterval(materialB, materialA, 0.95).halfWidth!).toBeGreaterThan(5 * interval.halfWidth!);
  });

  it('rejects unequal lengths and empty samples', () => {
    expect(() => pairedDifferenceInterval([1, 2], [1], 0.95)).toThrow(RangeError);
    expect(() => pairedDifferenceInterval([], [], 0.95)).toThrow(RangeError);
  });

  it('is narrower than Welch under common random numbers', () => {
    const random = randomSource(99);
    const shared = Array.from({ length: 20 }, () => 50 + 20 * random()); // common random numbers
    const a = shared.map((value) => value + 1 + 0.2 * random());
    const b = shared.map((value) => value + 0.2 * random());
    const paired = pairedDifferenceInterval(a, b, 0.95);
    const unpaired = welchInterval(a, b, 0.95);
    expect(paired.mean).toBeCloseTo(unpaired.mean, 12);
    expect(paired.halfWidth ?? Infinity).toBeLessThan((unpaired.halfWidth ?? 0) / 10);
  });
});

describe('bonferroniConfidence', () => {
  it('splits the error rate over the comparisons', () => {
    // Bonferroni 1 - alpha/k by hand: 1 - 0.05/3 = 0.983333..., 1 - 0.05/15 = 0.996666...
    expect(bonferroniConfidence(0.95, 3)).toBeCloseTo(0.9833333333, 9);
    expect(bonferroniConfidence(0.95, 15)).toBeCloseTo(0.9966666667, 9);
    expect(bonferroniConfidence(0.9, 1)).toBeCloseTo(0.9, 15);
    expect(() => bonferroniConfidence(0.95, 0)).toThrow(RangeError);
    expect(() => bonferroniConfidence(1.5, 2)).toThrow(RangeError);
  });
});

describe('quantileSorted', () => {
  const oneToTen = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];

  it('matches R type 7 on a small example', () => {
    // R: quantile(1:10, 0.95) = 9.55 — from *memory*, not re-run here.
    // Type 7 by hand (Hyndman & Fan 1996): h = (10-1)·0.95 = 8.55 -> x[8] + 0.55·(x[9]-x[8]) = 9 + 0.55 = 9.55.
    expect(quantileSorted(oneToTen, 0.95)).toBeCloseTo(9.55, 12);
    // Type 7 by hand: h = 9·0.5 = 4.5 -> 5 + 0.5·1 = 5.5 (the usual median)
    expect(quantileSorted(oneToTen, 0.5)).toBeCloseTo(5.5, 12);
    // Type 7 by hand on [1, 3, 4, 10]: h = 3·0.25 = 0.75 -> 1 + 0.75·(3-1) = 2.5
    expect(quantileSorted([1, 3, 4, 10], 0.25)).toBeCloseTo(2.5, 12);
    expect(quantileSorted(oneToTen, 0)).toBe(1);
    expect(quantileSorted(oneToTen, 1)).toBe(10);
    expect(quantileSorted([42], 0.3)).toBe(42);
  });

  it('agrees with simple-statistics quantileSorted (type 7 since 7.x) on random data', () => {
    const random = randomSource(5);
    for (let trial = 0; trial < 20; trial += 1) {
      const sorted = Array.from({ length: 1 + Math.floor(random() * 30) }, () => random() * 100).sort((x, y) => x - y);
      for (const p of [0, 0.01, 0.1, 0.25, 0.5, 0.9, 0.95, 0.99, 1]) {
        expect(quantileSorted(sorted, p)).toBeCloseTo(simpleStatisticsQuantileSorted(sorted, p), 12);
      }
    }
  });

  it('works on a Float64Array and rejects bad input', () => {
    expect(quantileSorted(Float64Array.from(oneToTen), 0.95)).toBeCloseTo(9.55, 12);
    expect(() => quantileSorted(new Float64Array(0), 0.5)).toThrow(RangeError);
    expect(() => quantileSorted(oneToTen, 1.1)).toThrow(RangeError);
    expect(() => quantileSorted(oneToTen, Number.NaN)).toThrow(RangeError);
  });
});

describe('welchInterval', () => {
  it('matches the Welch formula on a hand example with integer degrees of freedom', () => {
    // a: mean 3, sample variance 2.5; b: mean 5, sample variance 2.5 (by hand).
    // se^2 = 2.5/5 + 2.5/5 = 1; df = 1 / (0.5^2/4 + 0.5^2/4) = 8.
    const a = [1, 2, 3, 4, 5];
    const b = [3, 4, 5, 6, 7];
    const nistT8 = 2.306; // NIST e-Handbook table 1.3.6.7.2, df 8, upper tail 0.025
    const interval = welchInterval(a, b, 0.95);
    expect(interval.mean).toBe(-2);
    expect(interval.n).toBe(10);
    expect(interval.halfWidth).toBeCloseTo(nistT8 * 1, 3);
    expect(interval.low).toBeCloseTo(-2 - nistT8, 3);
    expect(interval.high).toBeCloseTo(-2 + nistT8, 3);
  });

  it('uses the Welch-Satterthwaite degrees of freedom on unequal samples', () => {
    const a = [1, 2, 3, 4, 5];
    const b = [2, 4, 6, 8, 10, 12];
    // By hand: var a = 2.5, var b = 14 (sum of squared deviations 70 over 5).
    const varianceOfMeanA = 2.5 / 5;
    const varianceOfMeanB = 14 / 6;
    const standardError = Math.sqrt(varianceOfMeanA + varianceOfMeanB);
    const degreesOfFreedom =
      (varianceOfMeanA + varianceOfMeanB) ** 2 / (varianceOfMeanA ** 2 / 4 + varianceOfMeanB ** 2 / 5); // ≈ 6.9714
    const interval = welchInterval(a, b, 0.95);
    expect(interval.mean).toBeCloseTo(-4, 12);
    // jStat's t quantile at the fractional degrees of freedom (reference library, not our wrapper).
    expect((interval.halfWidth ?? 0) / standardError).toBeCloseTo(jStat.studentt.inv(0.975, degreesOfFreedom), 9);
    // Between NIST t(0.975, 6) = 2.447 and t(0.975, 7) = 2.365 (table 1.3.6.7.2)
    expect((interval.halfWidth ?? 0) / standardError).toBeGreaterThan(2.365);
    expect((interval.halfWidth ?? 0) / standardError).toBeLessThan(2.447);
  });

  it('handles single values, constants and empty samples', () => {
    expect(welchInterval([1], [2, 3], 0.95)).toEqual({ mean: -1.5, halfWidth: null, low: null, high: null, n: 3 });
    expect(welchInterval([2, 2, 2], [1, 1], 0.95)).toEqual({ mean: 1, halfWidth: 0, low: 1, high: 1, n: 5 });
    expect(() => welchInterval([], [1, 2], 0.95)).toThrow(RangeError);
  });
});

describe('lag1Autocorrelation', () => {
  it('matches hand-worked examples (Box & Jenkins estimator, as in R acf)', () => {
    // [1..5]: deviations -2 -1 0 1 2, lag products 2 + 0 + 0 + 2 = 4, squares 10 -> 0.4.
    expect(lag1Autocorrelation([1, 2, 3, 4, 5])).toBeCloseTo(0.4, 12);
    // [1, -1, 1, -1]: mean 0, lag products -1 x 3 = -3, squares 4 -> -0.75.
    expect(lag1Autocorrelation([1, -1, 1, -1])).toBeCloseTo(-0.75, 12);
    // [2, 4, 4, 4, 5, 5, 7, 9]: mean 5, deviations -3 -1 -1 -1 0 0 2 4; products
    // 3 + 1 + 1 + 0 + 0 + 0 + 8 = 13, squares 32 -> 0.40625.
    expect(lag1Autocorrelation([2, 4, 4, 4, 5, 5, 7, 9])).toBeCloseTo(0.40625, 12);
    expect(lag1Autocorrelation([3, 3, 3])).toBe(0);
    expect(lag1Autocorrelation([7])).toBe(0);
  });
});

describe('mergeAdjacentBatches', () => {
  it('averages pairs and drops the first batch of an odd count', () => {
    expect(mergeAdjacentBatches([1, 3, 5, 7])).toEqual([2, 6]);
    expect(mergeAdjacentBatches([1, 3, 5, 7, 9])).toEqual([4, 8]);
    expect(mergeAdjacentBatches([4])).toEqual([]);
  });
});

describe('batchMeansInterval (lag-1 check, Law & Kelton ch. 9, *memory*)', () => {
  it('keeps batches whose lag-1 correlation is small and gives the NIST t interval over them', () => {
    // The first 20 digits of pi (lag-1 correlation 0.173, computed by bruteLag1 below), each
    // repeated twice: 40 batches whose neighbours are equal (lag-1 0.587), which must be
    // merged back into the 20.
    const base = [3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5, 8, 9, 7, 9, 3, 2, 3, 8, 4];
    const doubled = base.flatMap((v) => [v, v]);
    expect(bruteLag1(doubled)).toBeGreaterThan(0.2); // precondition: the 40 fail the check
    expect(bruteLag1(base)).toBeLessThanOrEqual(0.2); // precondition: the 20 pass it
    const result = batchMeansInterval(doubled, 0.95);
    expect(result.initialBatches).toBe(40);
    expect(result.batches).toBe(20);
    expect(result.reliable).toBe(true);
    expect(result.initialLag1).toBeCloseTo(bruteLag1(doubled), 12);
    // t(0.975, 19) = 2.093 (NIST 1.3.6.7.2); mean and sample sd from simple-statistics.
    const expectedHalfWidth = (2.093 * sampleStandardDeviation(base)) / Math.sqrt(20);
    expect(result.interval.mean).toBeCloseTo(referenceMean(base), 12);
    expect(result.interval.halfWidth).toBeCloseTo(expectedHalfWidth, 2);
    expect(result.interval.n).toBe(20);
    // Before the check the 40 repeated values looked like twice the information.
    expect(result.initialHalfWidth!).toBeLessThan(result.interval.halfWidth! * 0.8);
  });

  it('says a trending series is unreliable after merging down to 10 batches', () => {
    const ramp = Array.from({ length: 40 }, (_, i) => i);
    const result = batchMeansInterval(ramp, 0.95);
    expect(result.batches).toBe(10);
    expect(result.reliable).toBe(false);
    expect(result.lag1).toBeGreaterThan(0.2);
  });

  it('restores coverage on AR(1) data with correlated small batches (true mean 0 by construction)', () => {
    // X_t = 0.8 X_{t-1} + e_t, e_t uniform on (-1, 1): mean 0. 400 observations in 40 batches
    // of 10 have batch means with a lag-1 correlation of about 0.23 on average; the check
    // merges them where it is above 0.2 (measured: naive coverage 87.5%, checked 91.8%).
    const random = randomSource(31);
    let coveredNaive = 0;
    let coveredChecked = 0;
    const runs = 400;
    for (let run = 0; run < runs; run += 1) {
      let x = 0;
      for (let burn = 0; burn < 50; burn += 1) x = 0.8 * x + (2 * random() - 1);
      const series = Array.from({ length: 400 }, () => (x = 0.8 * x + (2 * random() - 1)));
      const means = batchMeans(series, 40);
      const naive = intervalOf(means, 0.95);
      const checked = batchMeansInterval(means, 0.95).interval;
      if (naive.low! <= 0 && 0 <= naive.high!) coveredNaive += 1;
      if (checked.low! <= 0 && 0 <= checked.high!) coveredChecked += 1;
    }
    expect(coveredChecked / runs).toBeGreaterThan(coveredNaive / runs);
    expect(coveredChecked / runs).toBeGreaterThan(0.9);
  });
});

// Direct evaluation of the lag-1 formula, independent of the implementation under test.
function bruteLag1(values: number[]): number {
  const m = values.reduce((a, b) => a + b, 0) / values.length;
  let top = 0;
  for (let i = 0; i + 1 < values.length; i += 1) top += (values[i] - m) * (values[i + 1] - m);
  return top / values.reduce((a, v) => a + (v - m) ** 2, 0);
}

describe('slopeInterval', () => {
  // NIST Statistical Reference Datasets, linear least squares, "Norris" (36 observations),
  // https://www.itl.nist.gov/div898/strd/lls/data/Norris.shtml: data and certified values.
  const norrisY = [0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8, 557.7, 228.3, 998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2, 117.6, 228.9, 668.4, 449.2, 0.2];
  const norrisX = [0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6, 556.0, 228.1, 995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1, 118.3, 229.2, 669.1, 448.9, 0.5];

  it('matches the NIST StRD Norris certified slope, intercept and standard error', () => {
    const fit = slopeInterval(norrisX, norrisY, 0.95);
    expect(fit.slope).toBeCloseTo(1.00211681802045, 12); // certified B1
    expect(fit.intercept).toBeCloseTo(-0.262323073774029, 10); // certified B0
    expect(fit.standardError! / 0.429796848199937e-3).toBeCloseTo(1, 10); // certified sd of B1
    expect(fit.degreesOfFreedom).toBe(34); // certified residual degrees of freedom
    // Residual SD (certified 0.884796396144373) from the residuals.
    const sse = fit.residuals.reduce((s, r) => s + r * r, 0);
    expect(Math.sqrt(sse / 34)).toBeCloseTo(0.884796396144373, 10);
    // Interval with jStat's t quantile (a reference library) at 34 degrees of freedom.
    const t34 = jStat.studentt.inv(0.975, 34);
    expect(fit.halfWidth! / (t34 * 0.429796848199937e-3)).toBeCloseTo(1, 8);
  });

  it('matches a hand-worked fit with t(0.975, 2) from the NIST table', () => {
    // x 0..3, y 0 1 1 2: Sxx = 5, Sxy = 3, slope 0.6, intercept 0.1; residuals -0.1 0.3
    // -0.3 0.1, SSE 0.2, s^2 = 0.1, se = sqrt(0.1 / 5) = 0.141421; 4.303 x se = 0.60854.
    const fit = slopeInterval([0, 1, 2, 3], [0, 1, 1, 2], 0.95);
    expect(fit.slope).toBeCloseTo(0.6, 12);
    expect(fit.standardError).toBeCloseTo(Math.sqrt(0.02), 12);
    expect(fit.halfWidth).toBeCloseTo(0.60854, 3);
    expect(slopeInterval([0, 1], [5, 3], 0.95)).toMatchObject({ slope: -2, halfWidth: null });
    expect(() => slopeInterval([1, 1, 1], [1, 2, 3], 0.95)).toThrow(RangeError);
  });
});

describe('batchedSlopeInterval', () => {
  it('recovers a known slope from a trend plus AR(1) noise and covers it', () => {
    // y = 5 + 3 t + AR(1) noise (phi 0.9): the true slope is 3 by construction.
    const random = randomSource(8);
    let covered = 0;
    const runs = 200;
    for (let run = 0; run < runs; run += 1) {
      let noise = 0;
      const t = Array.from({ length: 800 }, (_, i) => i / 100);
      const y = t.map((time) => {
        noise = 0.9 * noise + (2 * random() - 1);
        return 5 + 3 * time + noise;
      });
      const result = batchedSlopeInterval(t, y, 0.95);
      if (result.fit.low! <= 3 && 3 <= result.fit.high!) covered += 1;
    }
    expect(covered / runs).toBeGreaterThan(0.9);
  });
});

describe('clipInterval', () => {
  it('clips ends to the range and keeps mean and half-width', () => {
    expect(clipInterval({ mean: 0.01, halfWidth: 0.03, low: -0.02, high: 0.04, n: 3 }, 0, 1)).toEqual({ mean: 0.01, halfWidth: 0.03, low: 0, high: 0.04, n: 3 });
    expect(clipInterval({ mean: 0.99, halfWidth: 0.05, low: 0.94, high: 1.04, n: 3 }, 0, 1)).toEqual({ mean: 0.99, halfWidth: 0.05, low: 0.94, high: 1, n: 3 });
    expect(clipInterval({ mean: 2, halfWidth: null, low: null, high: null, n: 1 }, 0, Infinity)).toEqual({ mean: 2, halfWidth: null, low: null, high: null, n: 1 });
  });
});
