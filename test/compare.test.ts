import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { compareRuns, type PolicyRun } from '../reports/compare.ts';
import { tQuantile } from '../reports/stats/index.ts';

function runPolicy(policy: string, reps: number): PolicyRun {
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { policy, replications: reps, hours: 1, robots: 20, warmup: 0.25 });
  return { scenario, records: runReplications(scenario), wallSeconds: 0 };
}

describe('compare under common random numbers', () => {
  const runs = [runPolicy('token-passing', 6), runPolicy('token-passing-swaps', 6), runPolicy('greedy-reactive', 6)];
  const comparison = compareRuns(runs);

  it('gives every policy the same tasks in each replication', () => {
    for (let rep = 0; rep < 6; rep++) {
      const released = runs.map((run) => run.records[rep].released);
      // Poisson releases do not depend on the policy (stream "arrivals" of (seed, replication)).
      expect(new Set(released).size).toBe(1);
    }
  });

  it('the paired interval of the throughput difference is narrower than the unpaired one (the variance reduction is real)', () => {
    const d = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'token-passing-swaps' && x.metric === 'throughputPerHour')!;
    expect(d.halfWidth).not.toBeNull();
    expect(d.unpairedHalfWidth).not.toBeNull();
    expect(d.halfWidth!).toBeLessThan(d.unpairedHalfWidth!);
  });

  it('adjusts each of the 3 pairwise intervals to 1 - 0.05/3 (Bonferroni) and uses t(n-1) on the paired differences', () => {
    expect(comparison.differences).toHaveLength(3 * 4);
    for (const d of comparison.differences) expect(d.confidence).toBeCloseTo(1 - 0.05 / 3, 12);
    // Recompute one interval by hand: mean and sample sd of the per-replication differences.
    const d = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'greedy-reactive' && x.metric === 'throughputPerHour')!;
    const a = comparison.policies[0];
    const c = comparison.policies[2];
    expect(d.mean).toBeCloseTo(a.throughputPerHour.mean - c.throughputPerHour.mean, 9);
    // NIST-table-checked t quantile at the adjusted level with 5 degrees of freedom.
    const t = tQuantile(1 - (1 - d.confidence) / 2, 5);
    expect(t).toBeGreaterThan(2.571); // above the plain 95% value t(0.975, 5) = 2.571 (NIST table 1.3.6.7.2)
    expect(d.significant).toBe(d.low! > 0 || d.high! < 0);
  });

  it('greedy-reactive deadlocks and loses throughput against token passing on the demo hall', () => {
    const d = comparison.differences.find((x) => x.a === 'token-passing' && x.b === 'greedy-reactive' && x.metric === 'throughputPerHour')!;
    expect(d.significant).toBe(true);
    expect(d.mean).toBeGreaterThan(0);
    expect(comparison.policies[2].deadlocks.mean).toBeGreaterThan(0);
    for (const summary of comparison.policies) expect(summary.collisions).toBe(0);
  });
});
