/**
 * Policy comparison under common random numbers (DESIGN §6-§7). Every policy runs the same
 * replications with the same seeds, so replication i of every policy sees the same task
 * stream; differences are analysed pairwise on D_i = X_i(a) - X_i(b) with Student-t(n-1)
 * (Law, Simulation Modeling and Analysis, §10.2 "paired-t").
 *
 * Bonferroni: every interval reported together (pairs x metrics) gets the level
 * 1 - (1 - confidence) / (pairs x metrics), so that all of them hold together at the chosen
 * confidence (Bonferroni inequality; Law §10.3).
 *
 * Warm-up: each policy gets its own cut (MSER-5 on its own throughput series, or the fixed
 * cut), so a policy's numbers never depend on which other policies it is compared with.
 * The paired differences stay valid: D_i compares two estimates of each policy's steady
 * state from the same replication's task stream, and the D_i are independent across i.
 *
 * Lead-time differences of a pair where either policy's backlog grows are not estimable
 * (lead time then has no steady state): they get no interval and a note.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { bonferroniConfidence, pairedDifferenceInterval, welchInterval } from './stats/index.ts';
import { summarize, type ReplicationMetrics, type RunSummary } from './summary.ts';

export const comparedMetrics = ['throughputPerHour', 'leadTimeSeconds', 'leadTimeP95Seconds', 'stationStarvedFraction', 'deadlocks'] as const;
export type ComparedMetric = (typeof comparedMetrics)[number];

const leadTimeMetrics: readonly ComparedMetric[] = ['leadTimeSeconds', 'leadTimeP95Seconds'];

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
  /** Why there is no interval, or null. */
  note: string | null;
}

export interface Comparison {
  policies: RunSummary[];
  differences: Difference[];
  confidence: number;
  /** Intervals reported together, the Bonferroni divisor: pairs x metrics. */
  intervalsReported: number;
}

export interface PolicyRun {
  scenario: Scenario;
  records: ReplicationRecord[];
  wallSeconds: number;
}

export function compareRuns(runs: PolicyRun[]): Comparison {
  const parts = runs.map((run) => summarize(run.scenario, run.records, run.wallSeconds));
  const confidence = runs[0].scenario.run.confidence;
  const pairs = (runs.length * (runs.length - 1)) / 2;
  const intervalsReported = Math.max(1, pairs * comparedMetrics.length);
  const adjusted = bonferroniConfidence(confidence, intervalsReported);
  const pick = (w: ReplicationMetrics, metric: ComparedMetric): number => w[metric];
  const differences: Difference[] = [];
  for (let i = 0; i < runs.length; i++) {
    for (let j = i + 1; j < runs.length; j++) {
      for (const metric of comparedMetrics) {
        const base = { a: runs[i].scenario.policy.name, b: runs[j].scenario.policy.name, metric, confidence: adjusted };
        const unstable = [parts[i].summary, parts[j].summary].filter((s) => s.stable === false).map((s) => s.policy);
        const a = parts[i].perReplication.map((w) => pick(w, metric));
        const b = parts[j].perReplication.map((w) => pick(w, metric));
        // Replications where a metric is undefined for either policy (no delivery) drop out of the pair.
        const keep = a.map((v, k) => Number.isFinite(v) && Number.isFinite(b[k]));
        const aa = a.filter((_, k) => keep[k]);
        const bb = b.filter((_, k) => keep[k]);
        if (aa.length === 0) {
          differences.push({ ...base, mean: NaN, halfWidth: null, low: null, high: null, significant: false, unpairedHalfWidth: null, n: 0, note: 'no replication where both policies delivered' });
          continue;
        }
        const paired = pairedDifferenceInterval(aa, bb, adjusted);
        if (leadTimeMetrics.includes(metric) && unstable.length > 0) {
          const note = `not compared: backlog grows (${unstable.join(', ')})`;
          // Lead times of an unstable run are lower bounds: their difference estimates nothing.
          differences.push({ ...base, mean: NaN, halfWidth: null, low: null, high: null, significant: false, unpairedHalfWidth: null, n: paired.n, note });
          continue;
        }
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
          note: null,
        });
      }
    }
  }
  return { policies: parts.map((p) => p.summary), differences, confidence, intervalsReported };
}
