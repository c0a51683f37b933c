/**
 * How the run summary forms its intervals (reports/summary.ts): bounded to what a quantity
 * can take, deadlocks always per replication, batch means of one replication checked for
 * lag-1 correlation. Reference intervals are recomputed here with jStat's t quantile and
 * simple-statistics' sample standard deviation (reference libraries), not with our code.
 */
import { describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { mean as referenceMean, sampleStandardDeviation } from 'simple-statistics';
import { loadScenarioFile } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';

/** Student-t interval of the values by the reference libraries. */
function referenceInterval(values: number[], confidence = 0.95): { low: number; high: number } {
  const halfWidth = (jStat.studentt.inv(1 - (1 - confidence) / 2, values.length - 1) * sampleStandardDeviation(values)) / Math.sqrt(values.length);
  return { low: referenceMean(values) - halfWidth, high: referenceMean(values) + halfWidth };
}

describe('intervals stay within what the quantity can take', () => {
  // greedy-reactive, 10 robots at 900 tasks/h, seed 4: it jams early in some replications
  // and not in others, so the plain t intervals of small fractions and of throughput reach
  // below 0 (the precondition below checks that this still holds).
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { policy: 'greedy-reactive', robots: 10, tasksPerHour: 900, hours: 1, replications: 3, warmup: 0, seed: 4 });
  const { summary, perReplication } = summarize(scenario, runReplications(scenario), 0);

  it('fractions are clipped to [0, 1] and rates to >= 0, keeping the mean and the t half-width', () => {
    const cases = [
      { interval: summary.robotTime.loaded, values: perReplication.map((w) => w.robotTime.loaded) },
      { interval: summary.robotTime.handling, values: perReplication.map((w) => w.robotTime.handling) },
      { interval: summary.throughputPerHour, values: perReplication.map((w) => w.throughputPerHour) },
    ];
    for (const { interval, values } of cases) {
      const reference = referenceInterval(values);
      expect(reference.low).toBeLessThan(0); // precondition: the unclipped interval leaves the range
      expect(interval.low).toBe(0);
      expect(interval.high).toBeCloseTo(reference.high, 9);
      expect(interval.mean).toBeCloseTo(referenceMean(values), 9);
      expect(interval.halfWidth).toBeCloseTo(reference.high - referenceMean(values), 9);
    }
    // Every fraction in the summary lies in [0, 1], every count and rate at or above 0.
    const fractions = [summary.stationIdleFraction, summary.stationStarvedFraction, ...Object.values(summary.robotTime)];
    for (const f of fractions) {
      expect(f.low!).toBeGreaterThanOrEqual(0);
      expect(f.high!).toBeLessThanOrEqual(1);
    }
    for (const c of [summary.throughputPerHour, summary.tasksInSystem, summary.deadlocks, summary.deadlockRobotHoursLost]) expect(c.low!).toBeGreaterThanOrEqual(0);
  });
});

describe('one replication', () => {
  const scenario = (replications: number) => loadScenarioFile('scenarios/demo-sortation.yaml', { policy: 'greedy-reactive', robots: 24, hours: 2, replications, warmup: 0.25 });
  const one = summarize(scenario(1), runReplications(scenario(1)), 0);
  const two = summarize(scenario(2), runReplications(scenario(2)), 0);

  it('deadlock episodes and robot-hours lost are the replication\'s count, with no interval, in the same units as with two', () => {
    expect(one.summary.intervalMethod).toBe('batch-means');
    // Replication 0 is the same run in both (same seed, same streams, same fixed cut).
    expect(one.perReplication[0].deadlocks).toBe(two.perReplication[0].deadlocks);
    expect(one.perReplication[0].deadlocks).toBeGreaterThan(0); // precondition: greedy-reactive deadlocks here
    expect(one.summary.deadlocks).toEqual({ mean: two.perReplication[0].deadlocks, halfWidth: null, low: null, high: null, n: 1 });
    expect(one.summary.deadlockRobotHoursLost.mean).toBeCloseTo(two.perReplication[0].deadlockRobotHoursLost, 12);
    expect(one.summary.deadlockRobotHoursLost.halfWidth).toBeNull();
    // With two: the mean of the two replications' counts.
    expect(two.summary.deadlocks.mean).toBeCloseTo((two.perReplication[0].deadlocks + two.perReplication[1].deadlocks) / 2, 12);
    expect(two.summary.deadlocks.n).toBe(2);
  });

  it('batch-means intervals are centred on the whole run and carry the lag-1 check', () => {
    const { summary, perReplication } = one;
    expect(summary.throughputPerHour.mean).toBeCloseTo(perReplication[0].throughputPerHour, 12);
    const check = summary.batchMeans!.metrics.throughputPerHour;
    expect(check.initialBatches).toBe(40);
    expect([10, 20, 40]).toContain(check.batches);
    expect(summary.throughputPerHour.n).toBe(check.batches);
    expect(summary.batchMeans!.unreliable).toEqual(Object.entries(summary.batchMeans!.metrics).filter(([, c]) => !c.reliable).map(([name]) => name));
    expect(two.summary.batchMeans).toBeNull();
  });
});
