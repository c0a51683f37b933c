// mserCut: the MSER-5 warm-up truncation rule (White 1997, Simulation 69(6):323-334;
// White, Cobb & Spratt, WSC 2000; Franklin & White, WSC 2008).
// The series is cut into consecutive non-overlapping batches of `batchSize`
// observations counted FROM THE START (an incomplete batch at the tail is dropped,
// so the candidate truncation points are exact multiples of batchSize); the batch
// means Z_1..Z_m are fed to MSER(d) for d = 0..floor(m/2) (see mserStatistics) and the
// minimizing d is chosen, the smallest d on exact ties. cutObservations = d·batchSize
// observations should be deleted from the start of the series.
//
// tooShort is true, meaning "the run is probably too short for MSER to have found the
// end of the transient; lengthen it", when there are fewer than 10 batches or when the
// minimizing d lies in the last 10% of the allowed range, i.e. 10·d >= 9·floor(m/2)
// (the statistic is still falling at the half-way limit: the series keeps drifting).
//
// Note: batching here differs on purpose from batchMeans(), which drops its leftover
// at the start; MSER must measure cut points from the start of the series.
//
// Complexity: O(n) time, O(n / batchSize) memory.
// Too little data: a series with no complete batch returns cut 0, batches 0,
// tooShort true. Throws RangeError if batchSize is not a positive integer.
import { mserStatistics } from './mser-statistics.ts';

export type MserCut = {
  cutObservations: number;
  batches: number;
  cutBatches: number;
  tooShort: boolean;
};

const minimumBatches = 10;

export function mserCut(series: readonly number[], batchSize = 5): MserCut {
  if (!Number.isInteger(batchSize) || batchSize < 1) {
    throw new RangeError(`mserCut: batchSize must be a positive integer, got ${batchSize}`);
  }
  const batches = Math.floor(series.length / batchSize);
  const batchMeansFromStart = new Array<number>(batches);
  for (let batch = 0; batch < batches; batch += 1) {
    let sum = 0;
    const start = batch * batchSize;
    for (let offset = 0; offset < batchSize; offset += 1) {
      sum += series[start + offset];
    }
    batchMeansFromStart[batch] = sum / batchSize;
  }
  const statistics = mserStatistics(batchMeansFromStart);
  let cutBatches = 0;
  for (let candidate = 1; candidate < statistics.length; candidate += 1) {
    if (statistics[candidate] < statistics[cutBatches]) {
      cutBatches = candidate;
    }
  }
  const largestCut = Math.floor(batches / 2);
  const tooShort = batches < minimumBatches || 10 * cutBatches >= 9 * largestCut;
  return { cutObservations: cutBatches * batchSize, batches, cutBatches, tooShort };
}
