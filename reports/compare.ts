/**
 * Policy comparison under common random numbers (DESIGN §6-§7). Every policy runs the same
 * replications with the same seeds, so replication i of every policy sees the same task
 * stream; differences are analysed pairwise on D_i = X_i(a) - X_i(b) with Student-t(n-1)
 * (Law, Simulation Modeling and Analysis, §10.2 "paired-t"), each interval at the
 * Bonferroni-adjusted level 1 - (1 - confidence)/pairs so that all of them hold together.
 * All policies share one warm-up cut (the largest of their MSER-5 cuts), so the paired
 * windows cover the same simulated time.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { bonferroniConfidence, pairedDifferenceInterval, welchInterval } from './stats/index.ts';
import { summarize, warmupCut, type RunSummary, type WarmupInfo } from './summary.ts';
import type { WindowMetrics } from './window-metrics.ts';

export const comparedMetrics = ['throughputPerHour', 'leadTimeSeconds', 'stationStarvedFraction', 'deadlocks'] as const;
export type ComparedMetric = (typeof comparedMetrics)[number];

export interface Difference {
  a: string;
  b: string;
  metric: ComparedMetric;
  /** Mean of a - b. */
  mean: number;
  halfWidth: number | null;
  low: number | null;
  high: number | null;
  /** Bonferroni-adjusted level of this interval. */
  confidence: number;
  /** The interval excludes 0. */
  significant: boolean;
  /** Half-width an unpaired (Welch) interval would have at the same level: the variance reduction that common random numbers buy. */
  unpairedHalfWidth: number | null;
  n: number;
}

export interface Comparison {
  policies: RunSummary[];
  differences: Difference[];
  warmup: WarmupInfo;
  confidence: number;
}

export interface PolicyRun {
  scenario: Scenario;
  records: ReplicationRecord[];
  wallSeconds: number;
}

export function compareRuns(runs: PolicyRun[]): Comparison {
  const cuts = runs.map((run) => warmupCut(run.scenario, run.records));
  const shared = cuts.reduce((worst, cut) => (cut.intervals > worst.intervals ? cut : worst), cuts[0]);
  const warmup: WarmupInfo = { ...shared, tooShort: cuts.some((c) => c.tooShort) };
  const parts = runs.map((run) => summarize(run.scenario, run.records, run.wallSeconds, warmup));
  const confidence = runs[0].scenario.run.confidence;
  const pairs = (runs.length * (runs.length - 1)) / 2;
  const adjusted = bonferroniConfidence(confidence, Math.max(1, pairs));
  const pick = (w: WindowMetrics, metric: ComparedMetric): number => w[metric];
  const differences: Difference[] = [];
  for (let i = 0; i < runs.length; i++) {
    for (let j = i + 1; j < runs.length; j++) {
      for (const metric of comparedMetrics) {
        const a = parts[i].perReplication.map((w) => pick(w, metric));
        const b = parts[j].perReplication.map((w) => pick(w, metric));
        // Replications where a metric is undefined for either policy (no delivery) drop out of the pair.
        const keep = a.map((v, k) => Number.isFinite(v) && Number.isFinite(b[k]));
        const aa = a.filter((_, k) => keep[k]);
        const bb = b.filter((_, k) => keep[k]);
        const base = { a: runs[i].scenario.policy.name, b: runs[j].scenario.policy.name, metric, confidence: adjusted };
        if (aa.length === 0) {
          differences.push({ ...base, mean: NaN, halfWidth: null, low: null, high: null, significant: false, unpairedHalfWidth: null, n: 0 });
          continue;
        }
        const paired = pairedDifferenceInterval(aa, bb, adjusted);
        const unpaired = aa.length >= 2 ? welchInterval(aa, bb, adjusted) : null;
        differences.push({
          ...base,
          mean: paired.mean,
          halfWidth: paired.halfWidth,
          low: paired.low,
          high: paired.high,
          significant: paired.low !== null && paired.high !== null && (paired.low > 0 || paired.high < 0),
          unpairedHalfWidth: unpaired?.halfWidth ?? null,
          n: paired.n,
        });
      }
    }
  }
  return { policies: parts.map((p) => p.summary), differences, warmup, confidence };
}
