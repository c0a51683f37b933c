/**
 * The hourly profile of a run (sim/task-timing.ts, reports/realism-summary.ts) against the
 * demand's definition: a nonhomogeneous Poisson process whose rate in hour h is
 * tasksPerHour x profile[h mod length] (Law, Simulation Modeling and Analysis, 5th ed.,
 * §8.6) releases that many tasks per hour on average; and against the run's own totals
 * counted another way (sample intervals): the profile hours' mean throughput is the run's.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseScenarioText } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';

describe('hourly profile of the demo hall, profile [0.5, 1.5] at 600 tasks/h', () => {
  const base = parseScenarioText(readFileSync('scenarios/demo-sortation.yaml', 'utf8'), null);
  const scenario = {
    ...base,
    demand: { ...base.demand, kind: 'poisson' as const, tasksPerHour: 600, profile: [0.5, 1.5] },
    policy: { name: 'pibt', options: {} },
    run: { ...base.run, hours: 8, replications: 4, warmup: 0 },
  } as typeof base;

  it('releases 300 and 900 tasks per hour within the intervals, and the hours add up to the run', () => {
    const records = runReplications(scenario);
    const { summary } = summarize(scenario, records, 0);
    const hourly = summary.hourly!;
    expect(hourly.peakHour).toBe(1);
    expect(hourly.hoursCounted).toBe(8);
    const [quiet, peak] = hourly.rows;
    expect(quiet.multiplier).toBe(0.5);
    expect(quiet.releasedPerHour.low!).toBeLessThanOrEqual(300);
    expect(quiet.releasedPerHour.high!).toBeGreaterThanOrEqual(300);
    expect(peak.releasedPerHour.low!).toBeLessThanOrEqual(900);
    expect(peak.releasedPerHour.high!).toBeGreaterThanOrEqual(900);
    // Each profile hour occurs 4 times in 8 h: the mean of the two rows is the run's throughput.
    expect((quiet.throughputPerHour.mean + peak.throughputPerHour.mean) / 2).toBeCloseTo(summary.throughputPerHour.mean, 9);
    // The peak hour's customers wait longer than the quiet hour's.
    expect(peak.leadTimeSeconds.mean).toBeGreaterThan(quiet.leadTimeSeconds.mean);
  });

  it('has no hourly block without a profile', () => {
    const flat = { ...scenario, demand: { ...scenario.demand, profile: null }, run: { ...scenario.run, hours: 0.5, replications: 1 } } as typeof base;
    expect(summarize(flat, runReplications(flat), 0).summary.hourly).toBeUndefined();
  });
});
