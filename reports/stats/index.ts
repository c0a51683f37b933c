// Public surface of reports/stats: output-analysis statistics for simulation runs.
export { tQuantile } from './t-quantile.ts';
export type { Interval } from './interval.ts';
export { intervalOf } from './interval-of.ts';
export { mserStatistics } from './mser-statistics.ts';
export { mserCut } from './mser-cut.ts';
export type { MserCut } from './mser-cut.ts';
export { batchMeans } from './batch-means.ts';
export { pairedDifferenceInterval } from './paired-difference-interval.ts';
export { bonferroniConfidence } from './bonferroni-confidence.ts';
export { quantileSorted } from './quantile-sorted.ts';
export { welchInterval } from './welch-interval.ts';
