/**
 * Stability (bounded backlog) of Poisson and trace runs: the trend of tasks in system after
 * the warm-up (reports/stability.ts). Checked against the fluid approximation of an
 * overloaded queue, whose backlog grows at lambda - mu (Chen & Yao, Fundamentals of
 * Queueing Networks, 2001, ch. 5, *memory*; Newell, Applications of Queueing Theory, 1982,
 * *memory*), and against a stable M/D/1 queue, whose backlog has no trend.
 */
import { describe, expect, it } from 'vitest';
import { makeScenario } from './helpers.ts';
import { loadScenarioFile } from '../scenarios/load.ts';
import { runReplications } from '../experiments/replications.ts';
import { summarize } from '../reports/summary.ts';
import { windowMetrics } from '../reports/window-metrics.ts';
import { RunError } from '../sim/errors.ts';

function demoRun(rate: number, robots = 32) {
  const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', { robots, tasksPerHour: rate, hours: 2, replications: 3 });
  const records = runReplications(scenario);
  return { scenario, records, ...summarize(scenario, records, 0) };
}

describe('token passing on the demo hall, 32 robots (2 h x 3 replications)', () => {
  const overloaded = demoRun(1900);
  const moderate = demoRun(600);

  it('at 1,900 tasks/h the backlog grows: unstable, at the rate released minus delivered', () => {
    const { summary, records, cutIntervals } = overloaded;
    expect(summary.stable).toBe(false);
    expect(summary.backlogGrowthPerHour.low!).toBeGreaterThan(0);
    for (const trend of summary.stability.perReplication) expect(trend.stable).toBe(false);
    // Fluid approximation: growth = arrival rate - delivery rate over the same window.
    // Released and delivered counted from the per-interval records, independently of the slope.
    const m = records[0].metrics;
    let released = 0;
    let delivered = 0;
    for (const record of records) {
      for (let i = cutIntervals; i < m.intervalCount; i++) {
        released += record.metrics.releases[i];
        delivered += record.metrics.deliveries[i];
      }
    }
    const hours = (records.length * (records[0].endTick - cutIntervals * m.intervalTicks) * records[0].tickSeconds) / 3600;
    const fluid = (released - delivered) / hours;
    expect(fluid).toBeGreaterThan(100);
    expect(Math.abs(summary.backlogGrowthPerHour.mean - fluid) / fluid).toBeLessThan(0.1);
  });

  it('an unstable run prints lead times that count open tasks, without an interval', () => {
    const { summary, records, cutIntervals } = overloaded;
    expect(summary.leadTimeIncludesOpenTasks).toBe(true);
    for (const lead of [summary.leadTimeSeconds, summary.leadTimeP50Seconds, summary.leadTimeP95Seconds]) {
      expect(lead.halfWidth).toBeNull();
      expect(lead.low).toBeNull();
    }
    // The open tasks are the ones that waited longest: counting them raises the mean.
    const deliveredOnly = records.map((r) => windowMetrics(r, cutIntervals, r.metrics.intervalCount).leadTimeSeconds);
    const meanDeliveredOnly = deliveredOnly.reduce((s, v) => s + v, 0) / deliveredOnly.length;
    expect(summary.leadTimeSeconds.mean).toBeGreaterThan(1.5 * meanDeliveredOnly);
    expect(summary.littlesLaw.applicable).toBe(false);
  });

  it('at 600 tasks/h the backlog is bounded: stable, trend interval around 0', () => {
    const { summary } = moderate;
    expect(summary.stable).toBe(true);
    expect(summary.backlogGrowthPerHour.low!).toBeLessThanOrEqual(0);
    expect(summary.backlogGrowthPerHour.high!).toBeGreaterThanOrEqual(0);
    expect(summary.leadTimeIncludesOpenTasks).toBe(false);
    expect(summary.leadTimeSeconds.halfWidth).not.toBeNull();
    expect(summary.littlesLaw.applicable).toBe(true);
  });
});

// One robot on a 26-cell lane, pickup at one end and drop at the other, resting at the drop:
// every task costs 25 s to the pickup + 5 s loading + 25 s to the drop + 5 s unloading, a
// deterministic 60 s service (Groover's cycle time), mu = 60 tasks/h: an M/D/1 queue.
const lane = `
############################
#P........................D#
############################`;

function singleStation(tasksPerHour: number) {
  const scenario = makeScenario({
    layout: lane,
    robots: 1,
    pickupSeconds: 5,
    dropSeconds: 5,
    demand: { kind: 'poisson', mode: 'delivery', tasksPerHour, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    hours: 20,
    replications: 4,
    warmup: 'auto',
    sampleSeconds: 300,
  });
  return summarize(scenario, runReplications(scenario), 0).summary;
}

describe('M/D/1-like single station (mu = 60 tasks/h)', () => {
  it('rho = 0.5 (30 tasks/h): stable, no trend', () => {
    const summary = singleStation(30);
    expect(summary.stable).toBe(true);
    expect(summary.backlogGrowthPerHour.low!).toBeLessThanOrEqual(0);
    expect(summary.backlogGrowthPerHour.high!).toBeGreaterThanOrEqual(0);
    for (const trend of summary.stability.perReplication) expect(trend.stable).toBe(true);
  });

  it('rho = 1.3 (78 tasks/h): unstable, growth lambda - mu = 18 tasks/h (fluid approximation)', () => {
    const summary = singleStation(78);
    expect(summary.stable).toBe(false);
    // The saturated server delivers exactly mu.
    expect(summary.throughputPerHour.mean).toBeCloseTo(60, 6);
    const growth = summary.backlogGrowthPerHour;
    expect(growth.low!).toBeLessThanOrEqual(18);
    expect(growth.high!).toBeGreaterThanOrEqual(18);
    // Poisson arrivals over 20 h: the slope's standard deviation is about sqrt(6 lambda / (5 T))
    // = 2.2 tasks/h per replication (least squares on a random walk), 1.1 over 4.
    expect(Math.abs(growth.mean - 18)).toBeLessThan(3.5);
  });
});

describe('warm-up with demand that varies in time', () => {
  const profiled = (warmup: 'auto' | number) =>
    makeScenario({
      layout: lane,
      robots: 1,
      pickupSeconds: 5,
      dropSeconds: 5,
      demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 30, profile: [0.2, 1.5], pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
      hours: 4,
      replications: 2,
      warmup,
    });

  it('an hourly profile gets no automatic cut, and says so', () => {
    const scenario = profiled('auto');
    const { summary } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.warmup.method).toBe('none');
    expect(summary.warmupSeconds).toBe(0);
    expect(summary.warmup.note).toMatch(/hourly profile/);
  });

  it('a cut given by the user is kept', () => {
    const scenario = profiled(0.5);
    const { summary } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.warmup.method).toBe('fixed');
    expect(summary.warmupSeconds).toBe(1800);
  });

  it('a trace gets no automatic cut; a cut that leaves no delivery fails the run (RunError)', () => {
    // Three tasks released in the first minute, all delivered within 4 minutes (60 s each).
    const tasks = [0, 10, 20].map((releaseSeconds) => ({ releaseSeconds, pickup: 1 * 28 + 1, drop: 1 * 28 + 26 }));
    const trace = (warmup: 'auto' | number) =>
      makeScenario({ layout: lane, robots: 1, pickupSeconds: 5, dropSeconds: 5, demand: { kind: 'trace', mode: 'delivery', tracePath: 'inline', tasks }, hours: 1, replications: 1, warmup });
    const auto = trace('auto');
    const autoRecords = runReplications(auto);
    expect(autoRecords[0].delivered).toBe(3);
    const { summary, perReplication } = summarize(auto, autoRecords, 0);
    expect(summary.warmup.method).toBe('none');
    expect(summary.warmup.note).toMatch(/trace/);
    expect(perReplication[0].delivered).toBe(3);
    const cut = trace(0.5);
    expect(() => summarize(cut, runReplications(cut), 0)).toThrow(RunError);
    expect(() => summarize(cut, runReplications(cut), 0)).toThrow(/warm-up cut of 0\.50 h .* leaves no delivery/);
  });
});

describe('saturated (capacity) runs', () => {
  it('have no stability verdict (stable null)', () => {
    const scenario = makeScenario({ layout: lane, robots: 1, pickupSeconds: 5, dropSeconds: 5, hours: 1, replications: 2 });
    const { summary, perReplication } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.stable).toBeNull();
    for (const w of perReplication) expect(w.stable).toBeNull();
  });
});

describe('three-way verdict: a bounded backlog must be shown, not assumed', () => {
  // Material growth is 1% of throughput (reports/stability.ts). "stable" needs the growth
  // interval's upper end below it; "unstable" needs significant material growth; anything
  // else is "undetermined" (the run is too short or too few to tell), whatever the mean.
  it('the demo hall at its own demand over 5 x 4 h is shown bounded', () => {
    const scenario = loadScenarioFile('scenarios/demo-sortation.yaml', {});
    const { summary } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.stabilityVerdict).toBe('stable');
    expect(summary.backlogGrowthPerHour.high!).toBeLessThanOrEqual(summary.stability.materialGrowthPerHour);
  });

  it('a stable M/D/1 queue over 2 x 2 h cannot be told apart from slow growth: undetermined', () => {
    const scenario = makeScenario({
      layout: lane,
      robots: 1,
      pickupSeconds: 5,
      dropSeconds: 5,
      demand: { kind: 'poisson', mode: 'delivery', tasksPerHour: 30, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
      hours: 2,
      replications: 2,
      warmup: 0,
      sampleSeconds: 300,
    });
    const { summary } = summarize(scenario, runReplications(scenario), 0);
    expect(summary.stable).toBe(true);
    expect(summary.stabilityVerdict).toBe('undetermined');
    expect(summary.backlogGrowthPerHour.high!).toBeGreaterThan(summary.stability.materialGrowthPerHour);
  });

  it('an overloaded run is unstable, and a capacity run has no verdict', () => {
    expect(overloadedVerdict()).toBe('unstable');
    const scenario = makeScenario({ layout: lane, robots: 1, pickupSeconds: 5, dropSeconds: 5, hours: 1, replications: 2 });
    expect(summarize(scenario, runReplications(scenario), 0).summary.stabilityVerdict).toBeNull();
  });
});

function overloadedVerdict() {
  return singleStationVerdict(78);
}

function singleStationVerdict(tasksPerHour: number) {
  const scenario = makeScenario({
    layout: lane,
    robots: 1,
    pickupSeconds: 5,
    dropSeconds: 5,
    demand: { kind: 'poisson', mode: 'delivery', tasksPerHour, profile: null, pickups: { kind: 'uniform' }, drops: { kind: 'uniform' } },
    hours: 8,
    replications: 3,
    warmup: 'auto',
    sampleSeconds: 300,
  });
  return summarize(scenario, runReplications(scenario), 0).summary.stabilityVerdict;
}
