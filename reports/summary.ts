/**
 * From replication records to the run summary of DESIGN §7 (`run --json`).
 *
 * Warm-up: MSER-5 (White 1997; White, Cobb & Spratt 2000) on the throughput series averaged
 * over replications, one cut for all of them, or a fixed number of hours. Intervals:
 * Student-t over replications; with a single replication, non-overlapping batch means of
 * the post-warm-up run (20 batches, Schmeiser 1982) instead.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { cellLabel, CellKind, checkWellFormed, parseLayout } from '../sim/layout.ts';
import { intervalOf, mserCut, type Interval } from './stats/index.ts';
import { windowMetrics, type WindowMetrics } from './window-metrics.ts';
import { safetyNote } from './safety.ts';

export interface WarmupInfo {
  method: 'mser-5' | 'fixed';
  seconds: number;
  intervals: number;
  /** MSER-5 found its minimum near half the run: the run is too short to trust the cut. */
  tooShort: boolean;
}

export interface RunSummary {
  scenario: string;
  policy: string;
  robots: number;
  replications: number;
  hours: number;
  seed: number;
  confidence: number;
  tickSeconds: number;
  intervalMethod: 'replications' | 'batch-means';
  throughputPerHour: Interval;
  stationIdleFraction: Interval;
  stationStarvedFraction: Interval;
  leadTimeSeconds: Interval;
  leadTimeP50Seconds: Interval;
  leadTimeP95Seconds: Interval;
  tasksInSystem: Interval;
  robotTime: { loaded: Interval; empty: Interval; handling: Interval; waiting: Interval; parked: Interval };
  deadlocks: Interval;
  deadlockRobotHoursLost: Interval;
  collisions: number;
  tasks: { released: number; delivered: number; open: number };
  warmupSeconds: number;
  warmup: WarmupInfo;
  littlesLaw: { tasksInSystem: number; throughputTimesLeadTime: number; relativeGap: number };
  stations: { cell: string; kind: 'pickup' | 'drop'; idleFraction: number; starvedFraction: number }[];
  /** Well-formedness of the floor for this fleet (Ma et al. 2017); planned policies need it to finish every task. */
  wellFormed: boolean;
  wellFormedViolation: string | null;
  agentSteps: number;
  safety: string;
  timing: { wallSeconds: number; agentStepsPerSecond: number; planningSeconds: number; planningSecondsPerSimulatedHour: number; planningShare: number };
}

export interface SummaryParts {
  summary: RunSummary;
  /** Metrics per replication after the warm-up (the rows of replications.csv, the input of paired comparisons). */
  perReplication: WindowMetrics[];
  cutIntervals: number;
}

export function warmupCut(scenario: Scenario, records: ReplicationRecord[]): WarmupInfo {
  const m = records[0].metrics;
  const intervalSeconds = m.intervalTicks * records[0].tickSeconds;
  if (scenario.run.warmup !== 'auto') {
    const intervals = Math.min(m.intervalCount - 1, Math.round((scenario.run.warmup * 3600) / intervalSeconds));
    return { method: 'fixed', seconds: intervals * intervalSeconds, intervals, tooShort: false };
  }
  // Whole intervals only: a partial last interval would distort the series.
  const full = Math.floor(records[0].endTick / m.intervalTicks);
  const series: number[] = new Array(full).fill(0);
  for (const record of records) for (let i = 0; i < full; i++) series[i] += record.metrics.deliveries[i] / records.length;
  const cut = mserCut(series, 5);
  return { method: 'mser-5', seconds: cut.cutObservations * intervalSeconds, intervals: cut.cutObservations, tooShort: cut.tooShort };
}

/** `warmupOverride` imposes one cut on several runs (a comparison aligns its windows). */
export function summarize(scenario: Scenario, records: ReplicationRecord[], wallSeconds: number, warmupOverride?: WarmupInfo): SummaryParts {
  const warmup = warmupOverride ?? warmupCut(scenario, records);
  const intervalCount = records[0].metrics.intervalCount;
  const perReplication = records.map((r) => windowMetrics(r, warmup.intervals, intervalCount));
  const confidence = scenario.run.confidence;

  // The samples each interval is built from: one per replication, or batches of one long run.
  let samples: WindowMetrics[] = perReplication;
  let intervalMethod: RunSummary['intervalMethod'] = 'replications';
  if (records.length === 1) {
    const remaining = intervalCount - warmup.intervals;
    const batches = Math.min(20, remaining);
    if (batches >= 2) {
      intervalMethod = 'batch-means';
      const size = Math.floor(remaining / batches);
      // Leftover intervals dropped at the start, next to the warm-up cut.
      const start = intervalCount - batches * size;
      samples = [];
      for (let b = 0; b < batches; b++) samples.push(windowMetrics(records[0], start + b * size, start + (b + 1) * size));
    }
  }
  const interval = (pick: (w: WindowMetrics) => number): Interval => {
    const values = samples.map(pick).filter((v) => Number.isFinite(v));
    if (values.length === 0) return { mean: NaN, halfWidth: null, low: null, high: null, n: 0 };
    return intervalOf(values, confidence);
  };

  const layout = parseLayout(scenario.layoutText);
  const wellFormed = checkWellFormed(layout, scenario.fleet.robots);
  const stations = records[0].stationCells;
  const stationRows = Array.from(stations, (cell, s) => ({
    cell: cellLabel(layout, cell),
    kind: (layout.kind[cell] === CellKind.Pickup ? 'pickup' : 'drop') as 'pickup' | 'drop',
    idleFraction: mean(perReplication.map((w) => w.stationIdle[s])),
    starvedFraction: mean(perReplication.map((w) => w.stationStarved[s])),
  }));

  const throughput = interval((w) => w.throughputPerHour);
  const lead = interval((w) => w.leadTimeSeconds);
  const inSystem = interval((w) => w.tasksInSystem);
  const littleRight = (throughput.mean / 3600) * lead.mean;
  const agentSteps = records.reduce((s, r) => s + r.agentSteps, 0);
  const planningSeconds = records.reduce((s, r) => s + r.planningSeconds, 0);
  const engineSeconds = records.reduce((s, r) => s + r.wallSeconds, 0);

  const summary: RunSummary = {
    scenario: scenario.name,
    policy: scenario.policy.name,
    robots: scenario.fleet.robots,
    replications: records.length,
    hours: scenario.run.hours,
    seed: scenario.run.seed,
    confidence,
    tickSeconds: records[0].tickSeconds,
    intervalMethod,
    throughputPerHour: throughput,
    stationIdleFraction: interval((w) => w.stationIdleFraction),
    stationStarvedFraction: interval((w) => w.stationStarvedFraction),
    leadTimeSeconds: lead,
    leadTimeP50Seconds: interval((w) => w.leadTimeP50Seconds),
    leadTimeP95Seconds: interval((w) => w.leadTimeP95Seconds),
    tasksInSystem: inSystem,
    robotTime: {
      loaded: interval((w) => w.robotTime.loaded),
      empty: interval((w) => w.robotTime.empty),
      handling: interval((w) => w.robotTime.handling),
      waiting: interval((w) => w.robotTime.waiting),
      parked: interval((w) => w.robotTime.parked),
    },
    deadlocks: interval((w) => w.deadlocks),
    deadlockRobotHoursLost: interval((w) => w.deadlockRobotHoursLost),
    collisions: records.reduce((s, r) => s + r.collisions, 0),
    tasks: {
      released: records.reduce((s, r) => s + r.released, 0),
      delivered: records.reduce((s, r) => s + r.delivered, 0),
      open: records.reduce((s, r) => s + r.open, 0),
    },
    warmupSeconds: warmup.seconds,
    warmup,
    littlesLaw: {
      tasksInSystem: inSystem.mean,
      throughputTimesLeadTime: littleRight,
      relativeGap: Math.abs(inSystem.mean - littleRight) / Math.max(1e-12, Math.abs(inSystem.mean)),
    },
    stations: stationRows,
    wellFormed: wellFormed.wellFormed,
    wellFormedViolation: wellFormed.violation,
    agentSteps,
    safety: safetyNote,
    timing: {
      wallSeconds,
      agentStepsPerSecond: engineSeconds > 0 ? agentSteps / engineSeconds : 0,
      planningSeconds,
      planningSecondsPerSimulatedHour: planningSeconds / (records.length * scenario.run.hours),
      planningShare: engineSeconds > 0 ? planningSeconds / engineSeconds : 0,
    },
  };
  return { summary, perReplication, cutIntervals: warmup.intervals };
}

function mean(values: number[]): number {
  return values.length > 0 ? values.reduce((s, v) => s + v, 0) / values.length : NaN;
}

/** JSON with NaN and infinities as null, for the one document `--json` prints. */
export function toJson(value: unknown): string {
  return JSON.stringify(value, (_key, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2);
}
