/**
 * Capacity runs (saturated demand): a fleet must find work for every robot that could work,
 * so a capacity run delivers at least what the same fleet delivers under an overloaded
 * Poisson backlog, where work is always waiting (sim/engine.ts, capacityPoolDepth). The
 * backlog is the outside yardstick: 6,000 tasks/h is about three times what 32 robots
 * deliver on the demo hall, so its backlog only grows (REFERENCES.md, stability of a
 * queue-like run: with offered rate above capacity the backlog grows about linearly).
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize, type RunSummary } from '../reports/summary.ts';
import { demandMixGap } from '../reports/station-summary.ts';
import type { Scenario } from '../sim/model.ts';

const demoHall = path.join(import.meta.dirname, '..', 'scenarios', 'demo-sortation.yaml');

function summaryOf(policy: string, robots: number, demand: 'saturated' | number, hours = 1): RunSummary {
  const base = loadScenarioFile(demoHall, { policy, robots, hours, replications: 3, warmup: 0.25 });
  const points = { pickups: { kind: 'uniform' as const }, drops: { kind: 'zipf' as const, skew: 0.6 } };
  const scenario: Scenario =
    demand === 'saturated'
      ? { ...base, demand: { kind: 'saturated', mode: 'delivery', ...points } }
      : { ...base, demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: demand, profile: null, ...points } };
  return summarize(scenario, runReplications(scenario), 0).summary;
}

describe('capacity runs on the demo hall (38 parking spots)', () => {
  for (const policy of ['token-passing', 'flow-batch', 'pibt']) {
    for (const robots of [16, 32]) {
      it(`${policy}, ${robots} robots: capacity is not below the throughput under a 6,000 tasks/h backlog (within its interval)`, () => {
        const capacity = summaryOf(policy, robots, 'saturated');
        const backlog = summaryOf(policy, robots, 6000);
        expect(backlog.stable).toBe(false);
        expect(capacity.capacityRun).toBe(true);
        // Not significantly below: the difference of the two means within the half-width of
        // the difference (both runs are estimates; sqrt of the summed squared half-widths).
        expect(capacity.throughputPerHour.mean + Math.hypot(capacity.throughputPerHour.halfWidth!, backlog.throughputPerHour.halfWidth!)).toBeGreaterThanOrEqual(backlog.throughputPerHour.mean);
        // Every robot that could work found a task: almost no robot time parked while tasks wait.
        expect(capacity.parkedWhileTasksOpenFraction.mean).toBeLessThan(0.02);
      });
    }
  }
});

describe('pibt capacity runs from 8 to 100 robots on the demo hall (2 h x 3)', () => {
  // pibt uses every robot, so its pool stays at its start depth; its backlog dispatch must
  // still serve every induct when the pool holds more tasks than robots (policies/pibt/dispatch.ts).
  // Two-hour replications: at 100 robots the two runs differ by about 0.3% (1 h x 10:
  // 4,993 +- 14 against 5,006 +- 8 tasks/h), under the half-width of 1 h x 3.
  for (const robots of [8, 64, 100]) {
    it(`pibt, ${robots} robots: capacity is not below the throughput under a 6,000 tasks/h backlog (within its interval)`, () => {
      const capacity = summaryOf('pibt', robots, 'saturated', 2);
      const backlog = summaryOf('pibt', robots, 6000, 2);
      expect(backlog.stable).toBe(false);
      expect(capacity.throughputPerHour.mean + capacity.throughputPerHour.halfWidth!).toBeGreaterThanOrEqual(backlog.throughputPerHour.mean);
      expect(capacity.parkedWhileTasksOpenFraction.mean).toBeLessThan(0.02);
    });
  }
});

describe('demand mix gap (total variation distance between served and released station shares)', () => {
  it('is computed over a group by hand: released 50/30/20, served 50/40/10 gives 0.1', () => {
    const row = (tasksReleased: number, tasksServed: number) => ({ cell: 'x', kind: 'drop' as const, group: 'drop' as const, utilisation: 0, idleFraction: 1, noRobotFraction: null, travellingFraction: null, queueSecondsPerHour: 0, starvedFraction: null, tasksReleased, tasksServed });
    // Shares released 0.5, 0.3, 0.2 and served 0.5, 0.4, 0.1: (0 + 0.1 + 0.1) / 2 = 0.1.
    expect(demandMixGap([row(50, 50), row(30, 40), row(20, 10)], 'drop')).toBeCloseTo(0.1, 12);
    expect(demandMixGap([row(50, 50)], 'pickup')).toBeNull();
  });

  it('flags token passing at one robot per parking spot, which leaves the popular chutes waiting; not flow-batch', () => {
    // 38 robots, 40 chutes, Zipf-skewed drops: token passing keeps about one robot per chute
    // in flight, so the most popular chute (11% of parcels) is served far below its share.
    const tokenPassing = summaryOf('token-passing', 38, 'saturated');
    expect(tokenPassing.demandMixGap.drop!).toBeGreaterThan(0.1);
    const flowBatch = summaryOf('flow-batch', 38, 'saturated');
    expect(flowBatch.demandMixGap.drop!).toBeLessThan(0.05);
    expect(flowBatch.demandMixGap.pickup!).toBeLessThan(0.05);
  });
});

describe('a capacity run whose pool hits its cap says its figure is an upper bound', () => {
  // Token passing past about 40 busy robots on the demo hall leaves robots idle with the pool
  // full (robots + 64 x 48 task endpoints = 3,136 at 64 robots): most open tasks end another
  // robot's path. Its rate then grows with the tasks waiting, so Poisson demand below this
  // capacity is not sustained (64 robots at 2,150 tasks/h: backlog +340/h, README). pibt uses
  // every robot and never deepens the pool that far.
  it('token passing at 64 robots: capacityPoolAtCap, with the pool at robots + 64 x endpoints; pibt at 64: not at the cap', () => {
    const tp = summaryOf('token-passing', 64, 'saturated', 0.5);
    expect(tp.capacityPoolAtCap).toBe(true);
    expect(tp.capacityPoolDepth).toBe(64 + 64 * 48);
    const pibt = summaryOf('pibt', 64, 'saturated', 0.5);
    expect(pibt.capacityPoolAtCap).toBe(false);
    expect(pibt.capacityPoolDepth!).toBeLessThan(64 + 64 * 48);
    expect(summaryOf('pibt', 16, 900, 0.5).capacityPoolAtCap).toBeNull();
  });
});
