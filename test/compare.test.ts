import { describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { mean as referenceMean, sampleStandardDeviation } from 'simple-statistics';
import { loadScenarioFile } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { compareRuns, comparedMetrics, type PolicyRun } from '../reports/compare.ts';
import { summarize, type RunSummary } from '../reports/summary.ts';

// Automatic (MSER-5) warm-up, so that each policy's own cut is exercised.
function runPolicy(policy: string, reps: number): PolicyRun {
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { policy, replications: reps, hours: 1, robots: 20 });
  return { scenario, records: runReplications(scenario), wallSeconds: 0 };
}

const withoutTiming = ({ timing: _timing, ...rest }: RunSummary) => rest;

describe('compare under common random numbers', () => {
  const runs = [runPolicy('token-passing', 6), runPolicy('token-passing-swaps', 6), runPolicy('greedy-reactive', 6)];
  const comparison = compareRuns(runs);
  const pair = compareRuns(runs.slice(0, 2));

  it('gives every policy the same tasks in each replication', () => {
    for (let rep = 0; rep < 6; rep++) {
      const released = runs.map((run) => run.records[rep].released);
      // Poisson releases do not depend on the policy (stream "arrivals" of (seed, replication)).
      expect(new Set(released).size).toBe(1);
    }
  });

  it('adding a policy changes no other policy\'s numbers (each policy has its own warm-up cut)', () => {
    expect(withoutTiming(comparison.policies[0])).toEqual(withoutTiming(pair.policies[0]));
    expect(withoutTiming(comparison.policies[1])).toEqual(withoutTiming(pair.policies[1]));
    // Each policy's numbers are those of its own run summary.
    for (let i = 0; i < runs.length; i++) expect(withoutTiming(comparison.policies[i])).toEqual(withoutTiming(summarize(runs[i].scenario, runs[i].records, 0).summary));
    // The cuts really differ here (greedy-reactive jams and settles elsewhere), so a shared
    // cut would have moved the token-passing numbers.
    expect(new Set(comparison.policies.map((p) => p.warmupSeconds)).size).toBeGreaterThan(1);
  });

  it('the paired interval of the throughput difference is narrower than the unpaired one (the variance reduction is real)', () => {
    const d = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'token-passing-swaps' && x.metric === 'throughputPerHour')!;
    expect(d.halfWidth).not.toBeNull();
    expect(d.unpairedHalfWidth).not.toBeNull();
    expect(d.halfWidth!).toBeLessThan(d.unpairedHalfWidth!);
  });

  it('divides alpha by every interval reported together: 3 pairs x 5 metrics = 15 (Bonferroni)', () => {
    expect(comparedMetrics).toContain('leadTimeP95Seconds');
    expect(comparison.differences).toHaveLength(3 * 5);
    expect(comparison.intervalsReported).toBe(15);
    // 1 - 0.05 / 15 = 0.996667 by hand; with one pair, 1 - 0.05 / 5 = 0.99.
    for (const d of comparison.differences) expect(d.confidence).toBeCloseTo(0.9966666667, 9);
    for (const d of pair.differences) expect(d.confidence).toBeCloseTo(0.99, 12);
  });

  it('each paired interval is the paired-t interval at the adjusted level, recomputed with jStat and simple-statistics', () => {
    const perReplication = runs.map((run) => summarize(run.scenario, run.records, 0).perReplication);
    for (const metric of ['throughputPerHour', 'stationStarvedFraction', 'deadlocks'] as const) {
      const d = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'greedy-reactive' && x.metric === metric)!;
      const differences = perReplication[0].map((w, k) => w[metric] - perReplication[2][k][metric]).filter((v) => Number.isFinite(v));
      // Paired-t (Law, Simulation Modeling and Analysis, §10.2): mean ± t(1 - alpha / (2 k), n - 1) s / sqrt(n), k = 15.
      const t = jStat.studentt.inv(1 - 0.05 / (2 * 15), differences.length - 1);
      const expectedHalfWidth = (t * sampleStandardDeviation(differences)) / Math.sqrt(differences.length);
      expect(d.n).toBe(differences.length);
      expect(d.mean).toBeCloseTo(referenceMean(differences), 9);
      expect(d.halfWidth!).toBeCloseTo(expectedHalfWidth, 6);
      expect(d.significant).toBe(Math.abs(referenceMean(differences)) > expectedHalfWidth);
    }
  });

  it('lead-time differences against a policy whose backlog grows get no interval and a note', () => {
    expect(comparison.policies[2].stable).toBe(false); // greedy-reactive jams at 20 robots
    for (const metric of ['leadTimeSeconds', 'leadTimeP95Seconds']) {
      const d = comparison.differences.find((x) => x.b === 'greedy-reactive' && x.metric === metric)!;
      expect(d.halfWidth).toBeNull();
      expect(d.significant).toBe(false);
      expect(d.note).toMatch(/backlog grows \(greedy-reactive\)/);
    }
    const stablePair = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'token-passing-swaps' && x.metric === 'leadTimeP95Seconds')!;
    expect(comparison.policies[0].stable && comparison.policies[1].stable).toBe(true);
    expect(stablePair.halfWidth).not.toBeNull();
    expect(stablePair.note).toBeNull();
  });

  it('greedy-reactive deadlocks and loses throughput against token passing on the demo hall', () => {
    const d = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'greedy-reactive' && x.metric === 'throughputPerHour')!;
    expect(d.significant).toBe(true);
    expect(d.mean).toBeGreaterThan(0);
    expect(comparison.policies[2].deadlocks.mean).toBeGreaterThan(0);
    for (const summary of comparison.policies) expect(summary.collisions).toBe(0);
  });
});
