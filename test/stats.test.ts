import { describe, expect, it } from 'vitest';
import { quantileSorted as simpleStatisticsQuantileSorted } from 'simple-statistics';
import {
  batchMeans,
  bonferroniConfidence,
  intervalOf,
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
    expect(intervalOf(values)).toEqual(intervalOf(values, 0.95));
    expect(intervalOf(values, 0.99).halfWidth ?? 0).toBeGreaterThan(intervalOf(values, 0.95).halfWidth ?? 0);
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
  it('equals intervalOf the differences', () => {
    const a = [10.2, 11.5, 9.8, 12.1, 10.9, 11.3];
    const b = [9.9, 11.0, 9.9, 11.4, 10.1, 11.0];
    const differences = a.map((value, index) => value - b[index]);
    expect(pairedDifferenceInterval(a, b, 0.95)).toEqual(intervalOf(differences, 0.95));
    expect(pairedDifferenceInterval(a, b, 0.9)).toEqual(intervalOf(differences, 0.9));
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
    expect(bonferroniConfidence(0.95, 3)).toBeCloseTo(1 - 0.05 / 3, 15); // Bonferroni: 1 - alpha/k
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
    expect((interval.halfWidth ?? 0) / standardError).toBeCloseTo(tQuantile(0.975, degreesOfFreedom), 12);
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
