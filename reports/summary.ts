/**
 * From replication records to the run summary of DESIGN §7 (`run --json`).
 *
 * Warm-up: MSER-5 (White 1997; White, Cobb & Spratt 2000) on the throughput series averaged
 * over replications, one cut for all of them, or a fixed number of hours; no automatic cut
 * when demand varies in time (an hourly profile, a trace), since MSER-5 would cut the
 * demand's own variation. A cut that leaves no delivery fails the run (RunError).
 *
 * Intervals: Student-t over replications. With a single replication, batch means of the
 * post-warm-up run instead (reports/stats/batch-means-interval.ts: 40 batches merged while
 * their lag-1 correlation is above 0.2, flagged unreliable if it stays so at 10), centred
 * on the whole run's value. Deadlock episodes and robot-hours lost are counts per
 * replication: with one replication, the count and no interval. Fractions are clipped to
 * [0, 1] and counts, rates and times to >= 0 (the rules of reports/interval-rules.ts, shared with the sweep tables).
 *
 * Stability (reports/stability.ts): every Poisson and trace run says whether its backlog
 * is bounded; an unstable run's lead times count the ages of tasks still open and get no
 * interval (they are lower bounds).
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { RunError } from '../sim/errors.ts';
import { checkWellFormed, parseLayout } from '../sim/layout.ts';
import { restCellsForFleet, withRestCells } from '../sim/rest-cells.ts';
import { batchMeansInterval, batchMeansRule, mserCut, type Interval } from './stats/index.ts';
import { bounded, noInterval, replicationInterval, unstableLeadTime, type Bounds } from './interval-rules.ts';
import { windowMetrics, type WindowMetrics } from './window-metrics.ts';
import { assessStability, type StabilityReport } from './stability.ts';
import { safetyNote } from './safety.ts';
import { demandMixGap, stationGroupSummaries, stationRows, type StationGroupSummary, type StationRow } from './station-summary.ts';
import { summarizeRealism, type BreakdownSummary, type ChargingSummary, type HourlySummary, type LeadTimeSplitSummary } from './realism-summary.ts';
import { summarizeExecution, type DelaySummary, type TurningSummary } from './execution-summary.ts';

export interface WarmupInfo {
  /** `none`: no automatic cut because demand varies in time (see `note`). */
  method: 'mser-5' | 'fixed' | 'none';
  seconds: number;
  intervals: number;
  /** MSER-5 found its minimum near half the run: the run is too short to trust the cut. */
  tooShort: boolean;
  /** Why the cut is what it is when that is not obvious, else null. */
  note: string | null;
}

/** How a single replication's batch-means interval of one metric came out (lag-1 check). */
export interface BatchMeansCheck {
  initialBatches: number;
  initialLag1: number;
  initialHalfWidth: number | null;
  batches: number;
  lag1: number;
  halfWidth: number | null;
  reliable: boolean;
}

export interface StabilitySummary {
  materialGrowthPerHour: number;
  fromSeconds: number;
  toSeconds: number;
  perReplication: { replication: number; stable: boolean; growthPerHour: number; low: number | null; high: number | null; batches: number; reliable: boolean }[];
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
  /** Lead times include the ages of tasks still open at the end (unstable runs): lower bounds, no interval. */
  leadTimeIncludesOpenTasks: boolean;
  /** Mean lead time of delivered tasks split into waiting for a robot, empty travel, loaded travel and handling (they add up to it). */
  leadTimeSplit: LeadTimeSplitSummary;
  /** Demand with an hourly profile: throughput and lead time per hour of the profile. */
  hourly?: HourlySummary;
  tasksInSystem: Interval;
  /** Bounded backlog (no material, significant growth of tasks in system after the warm-up); null for saturated (capacity) runs. */
  stable: boolean | null;
  /**
   * 'stable' when the growth interval lies below the material growth (bounded backlog shown),
   * 'unstable' when material growth is significant, 'undetermined' when the interval is too
   * wide to tell (then `stable` is true but unproven), null for capacity runs.
   */
  stabilityVerdict: 'stable' | 'unstable' | 'undetermined' | null;
  /** Trend of tasks in system after the warm-up, tasks per hour. */
  backlogGrowthPerHour: Interval;
  stability: StabilitySummary;
  /** `charging` with a battery (at, going to or waiting for a charger), `broken` with breakdowns. */
  robotTime: { loaded: Interval; empty: Interval; handling: Interval; waiting: Interval; parked: Interval; charging?: Interval; broken?: Interval };
  /**
   * With a battery or breakdowns: share of robot time standing blocked in a line that ends
   * only at robots broken down or charging on a charger (part of robotTime.waiting).
   */
  waitingBehindFixedFraction?: Interval;
  /** With breakdowns: share of robot time not broken down. */
  availability?: Interval;
  /** With a battery. */
  charging?: ChargingSummary;
  /** With breakdowns. */
  breakdowns?: BreakdownSummary;
  /** With a turning time (units.turnSeconds > 0). */
  turning?: TurningSummary;
  /** With execution delays (faults.delays). */
  delays?: DelaySummary;
  /** Per replication, always (with one replication: the count, no interval). */
  deadlocks: Interval;
  livelocks: Interval;
  gridlocks: Interval;
  /** Robot-hours lost in deadlock and livelock episodes. */
  deadlockRobotHoursLost: Interval;
  /** Saturated demand: throughput and robot time measure capacity; lead time and tasks in system are not reported. */
  capacityRun: boolean;
  /** Saturated demand: the open-task pool's depth at the end (starts at robots + task endpoints, grows while the policy leaves robots idle; the largest over replications); null otherwise. */
  capacityPoolDepth: number | null;
  /**
   * Saturated demand: true when the pool reached its cap (robots + 64 x task endpoints) in
   * some replication, i.e. the policy left robots idle even with that many tasks open (its
   * own rules held them back). Such a policy's throughput grows with the tasks waiting, so
   * this capacity is an upper bound that needs that deep a queue, not a rate the fleet
   * sustains with a bounded one: judge the fleet at the target rate (run --rate, size).
   * null for other demand.
   */
  capacityPoolAtCap: boolean | null;
  /** Mean loaded distance (meters) of tasks delivered and released after the warm-up: a gap shows dispatch favouring short tasks. */
  loadedMetersPerTask: { delivered: Interval; released: Interval };
  /** Total variation distance between the station shares of tasks served and released (whole run), per group: a large gap means some station's work is left waiting. */
  demandMixGap: { pickup: number | null; drop: number | null };
  /** Mean number of robots holding a task. */
  busyRobots: Interval;
  /** Share of robot time parked (no task, not moving) while released tasks were open. */
  parkedWhileTasksOpenFraction: Interval;
  collisions: number;
  /** `open` = released and not delivered at the end, counted by task state; `openByState` splits it. */
  tasks: { released: number; delivered: number; open: number; openByState: { waiting: number; held: number; assigned: number; pickedUp: number } };
  /** Trace demand: tasks in the trace, tasks released after the run's end (never released), and whether the run ended at the last task's completion; null otherwise. */
  trace: { tasks: number; notReleased: number; endedAtLastTaskSeconds: number | null } | null;
  warmupSeconds: number;
  warmup: WarmupInfo;
  /** One replication: the lag-1 check of each metric's batch means; null over replications. */
  batchMeans: { maximumLag1: number; minimumBatches: number; unreliable: string[]; metrics: Record<string, BatchMeansCheck> } | null;
  littlesLaw: { applicable: boolean; tasksInSystem: number; throughputTimesLeadTime: number; relativeGap: number };
  stationGroups: { pickup: StationGroupSummary; drop: StationGroupSummary };
  stations: StationRow[];
  /** Well-formedness of the floor for this fleet (Ma et al. 2017); planned policies need it to finish every task. */
  wellFormed: boolean;
  wellFormedViolation: string | null;
  /** Rest cells the policy rests robots on beyond the parking spots (sim/rest-cells.ts); 0 when it uses none. */
  restCellsUsed: number;
  /** Well-formed once those rest cells count as non-task endpoints (equals wellFormed when none are used). */
  wellFormedWithRestCells: boolean;
  /**
   * What holds the policy back, from its own counters; null when it reports none.
   * heldBackTaskSecondsPerHour: open tasks that no robot may take under the policy's rules
   * (token passing: their pickup or drop ends another robot's path; flow-batch: their
   * pickup already has pickupQueueLimit robots bound for it), in task-seconds per simulated
   * hour over the whole run (divide by 3600 for the mean number of such tasks).
   */
  policyLimits: { heldBackTaskSecondsPerHour: Interval } | null;
  agentSteps: number;
  safety: string;
  timing: { wallSeconds: number; agentStepsPerSecond: number; planningSeconds: number; planningSecondsPerSimulatedHour: number; planningShare: number };
}

/** One replication's metrics after the warm-up, with its own stability verdict. */
export interface ReplicationMetrics extends WindowMetrics {
  replication: number;
  /** null for saturated (capacity) runs. */
  stable: boolean | null;
  backlogGrowthPerHour: number;
  backlogGrowthLow: number | null;
  backlogGrowthHigh: number | null;
}

export interface SummaryParts {
  summary: RunSummary;
  /** Metrics per replication after the warm-up (the rows of replications.csv, the input of paired comparisons). */
  perReplication: ReplicationMetrics[];
  cutIntervals: number;
}

/** Demand that changes in time on purpose: an automatic cut would remove part of it. */
function timeVaryingDemand(scenario: Scenario): string | null {
  const demand = scenario.demand;
  if (demand.kind === 'trace') return 'demand is a trace';
  if (demand.kind === 'poisson' && demand.profile !== null && demand.profile.some((v) => v !== demand.profile![0])) return 'demand has an hourly profile';
  return null;
}

export function warmupCut(scenario: Scenario, records: ReplicationRecord[]): WarmupInfo {
  const m = records[0].metrics;
  const intervalSeconds = m.intervalTicks * records[0].tickSeconds;
  if (scenario.run.warmup !== 'auto') {
    // Bounded by the planned run (a trace that ends early leaves fewer intervals: the cut stands and may leave no delivery).
    const planned = Math.ceil(records[0].plannedEndTick / m.intervalTicks);
    const intervals = Math.min(planned - 1, Math.round((scenario.run.warmup * 3600) / intervalSeconds));
    return { method: 'fixed', seconds: intervals * intervalSeconds, intervals, tooShort: false, note: null };
  }
  const varying = timeVaryingDemand(scenario);
  if (varying !== null) {
    // MSER-5 reads a quiet first hour as a transient and cuts it (throughput over the rest is then too high).
    return { method: 'none', seconds: 0, intervals: 0, tooShort: false, note: `${varying}: no automatic warm-up cut (set run.warmup or --warmup to cut)` };
  }
  // Whole intervals only: a partial last interval would distort the series.
  const full = Math.floor(records[0].endTick / m.intervalTicks);
  const series: number[] = new Array(full).fill(0);
  for (const record of records) for (let i = 0; i < full; i++) series[i] += record.metrics.deliveries[i] / records.length;
  const cut = mserCut(series, 5);
  return { method: 'mser-5', seconds: cut.cutObservations * intervalSeconds, intervals: cut.cutObservations, tooShort: cut.tooShort, note: null };
}

/**
 * The batches of a single replication's post-warm-up run at the finest level of the
 * batch-means check: up to `batchMeansRule.initialBatches` equal batches of whole intervals,
 * leftover intervals dropped at the start (next to the cut), a partial last interval left out.
 */
function finestBatches(record: ReplicationRecord, cutIntervals: number): WindowMetrics[] {
  const full = Math.floor(record.endTick / record.metrics.intervalTicks);
  const remaining = full - cutIntervals;
  const count = Math.min(batchMeansRule.initialBatches, remaining);
  if (count < 2) return [];
  const size = Math.floor(remaining / count);
  const start = full - count * size;
  const batches: WindowMetrics[] = [];
  for (let b = 0; b < count; b++) batches.push(windowMetrics(record, start + b * size, start + (b + 1) * size));
  return batches;
}

/**
 * `warmupOverride` imposes one cut on several runs. `breakdownBaseline`: throughput per
 * replication (post-warm-up, same order) of the same scenario without breakdowns, for the
 * paired throughput lost (experiments/fault-baselines.ts). `delayBaseline`: the same
 * without execution delays (experiments/fault-baselines.ts).
 */
export function summarize(
  scenario: Scenario,
  records: ReplicationRecord[],
  wallSeconds: number,
  warmupOverride?: WarmupInfo,
  breakdownBaseline: number[] | null = null,
  delayBaseline: number[] | null = null,
): SummaryParts {
  const warmup = warmupOverride ?? warmupCut(scenario, records);
  const intervalCount = records[0].metrics.intervalCount;
  const confidence = scenario.run.confidence;
  let windows = records.map((r) => windowMetrics(r, warmup.intervals, intervalCount));

  const deliveredAfter = windows.reduce((s, w) => s + w.delivered, 0);
  const deliveredBefore = records.reduce((s, r) => {
    let sum = 0;
    for (let i = 0; i < warmup.intervals; i++) sum += r.metrics.deliveries[i];
    return s + sum;
  }, 0);
  if (deliveredAfter === 0 && deliveredBefore > 0) {
    throw new RunError(
      `policy ${scenario.policy.name}: the warm-up cut of ${(warmup.seconds / 3600).toFixed(2)} h (${warmup.method}) leaves no delivery to measure (${deliveredBefore} tasks delivered before it, none after, over ${records.length} replication${records.length === 1 ? '' : 's'}); set --warmup 0 or a shorter cut, or run longer`,
    );
  }

  const stability: StabilityReport = assessStability(scenario, records, warmup.intervals, windows.map((w) => w.throughputPerHour));
  const unstable = stability.stable === false;
  // An unstable run's delivered tasks are the lucky ones: count the waiting ones' ages too.
  if (unstable) windows = records.map((r) => windowMetrics(r, warmup.intervals, intervalCount, true));
  const perReplication: ReplicationMetrics[] = windows.map((w, i) => {
    const trend = stability.perReplication[i];
    return {
      ...w,
      replication: records[i].replication,
      stable: stability.stable === null ? null : trend.stable,
      backlogGrowthPerHour: trend?.growthPerHour ?? NaN,
      backlogGrowthLow: trend?.low ?? null,
      backlogGrowthHigh: trend?.high ?? null,
    };
  });

  // The samples each interval is built from: one per replication, or batches of one long run.
  const batches = records.length === 1 ? finestBatches(records[0], warmup.intervals) : [];
  const intervalMethod: RunSummary['intervalMethod'] = batches.length >= 2 ? 'batch-means' : 'replications';
  const batchChecks: Record<string, BatchMeansCheck> = {};

  /** Over replications (t), or over batch means of the one replication, centred on its whole-window value. */
  const interval = (name: string, pick: (w: WindowMetrics) => number, bounds: Bounds): Interval => {
    if (intervalMethod === 'replications') return replicationInterval(perReplication.map(pick), confidence, bounds);
    const whole = pick(perReplication[0]);
    const values = batches.map(pick).filter((v) => Number.isFinite(v));
    if (!Number.isFinite(whole)) return noInterval(NaN, 0);
    if (values.length < 2) return noInterval(whole, 1);
    const check = batchMeansInterval(values, confidence);
    const halfWidth = check.interval.halfWidth;
    batchChecks[name] = {
      initialBatches: check.initialBatches,
      initialLag1: check.initialLag1,
      initialHalfWidth: check.initialHalfWidth,
      batches: check.batches,
      lag1: check.lag1,
      halfWidth,
      reliable: check.reliable,
    };
    const result = halfWidth === null ? noInterval(whole, check.batches) : { mean: whole, halfWidth, low: whole - halfWidth, high: whole + halfWidth, n: check.batches };
    return bounded(result, bounds);
  };
  /** Counts per replication: never per batch, so one replication gives the count and no interval. */
  const perReplicationInterval = (pick: (w: WindowMetrics) => number, bounds: Bounds): Interval => replicationInterval(perReplication.map(pick), confidence, bounds);
  /** Lead times: an unstable run's are lower bounds and get no interval. */
  const leadInterval = (name: string, pick: (w: WindowMetrics) => number): Interval => {
    return unstable ? unstableLeadTime(perReplication.map(pick)) : interval(name, pick, 'nonNegative');
  };

  const layout = parseLayout(scenario.layoutText);
  const wellFormed = checkWellFormed(layout, scenario.fleet.robots);
  const restCellsUsed = records[0].policyCounters.restCells ?? 0;
  const wellFormedWithRestCells =
    wellFormed.wellFormed || (restCellsUsed > 0 && checkWellFormed(withRestCells(layout, restCellsForFleet(layout, scenario.fleet.robots)), scenario.fleet.robots).wellFormed);
  const heldBack = records.map((r) => r.policyCounters.heldBackTaskSeconds);
  // A whole-run rate per replication (the policy counts over the whole run): replications only, never batches.
  const policyLimits = heldBack.every((v) => v !== undefined)
    ? { heldBackTaskSecondsPerHour: replicationInterval(heldBack.map((v) => v! / scenario.run.hours), confidence, 'nonNegative') }
    : null;
  const stations = stationRows(layout, records, perReplication);
  const sum = (pick: (r: ReplicationRecord) => number) => records.reduce((s, r) => s + pick(r), 0);
  const demand = scenario.demand;

  const realism = summarizeRealism(scenario, records, perReplication, { interval, perReplicationInterval, leadInterval }, warmup.intervals, breakdownBaseline);
  const throughput = interval('throughputPerHour', (w) => w.throughputPerHour, 'nonNegative');
  const lead = leadInterval('leadTimeSeconds', (w) => w.leadTimeSeconds);
  const inSystem = interval('tasksInSystem', (w) => w.tasksInSystem, 'nonNegative');
  const littleRight = (throughput.mean / 3600) * lead.mean;
  const agentSteps = records.reduce((s, r) => s + r.agentSteps, 0);
  const planningSeconds = records.reduce((s, r) => s + r.timing.planningSeconds, 0);
  const engineSeconds = records.reduce((s, r) => s + r.timing.wallSeconds, 0);

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
    stationIdleFraction: interval('stationIdleFraction', (w) => w.stationIdleFraction, 'fraction'),
    stationStarvedFraction: interval('stationStarvedFraction', (w) => w.stationStarvedFraction, 'fraction'),
    leadTimeSeconds: lead,
    leadTimeP50Seconds: leadInterval('leadTimeP50Seconds', (w) => w.leadTimeP50Seconds),
    leadTimeP95Seconds: leadInterval('leadTimeP95Seconds', (w) => w.leadTimeP95Seconds),
    leadTimeIncludesOpenTasks: unstable,
    leadTimeSplit: realism.leadTimeSplit,
    ...(realism.hourly ? { hourly: realism.hourly } : {}),
    tasksInSystem: inSystem,
    stable: stability.stable,
    stabilityVerdict: stability.verdict,
    backlogGrowthPerHour: stability.backlogGrowthPerHour,
    stability: {
      materialGrowthPerHour: stability.materialGrowthPerHour,
      fromSeconds: stability.fromSeconds,
      toSeconds: stability.toSeconds,
      perReplication: stability.perReplication.map((t) => ({
        replication: t.replication,
        stable: t.stable,
        growthPerHour: t.growthPerHour,
        low: t.low,
        high: t.high,
        batches: t.batches,
        reliable: t.reliable,
      })),
    },
    robotTime: {
      loaded: interval('robotTime.loaded', (w) => w.robotTime.loaded, 'fraction'),
      empty: interval('robotTime.empty', (w) => w.robotTime.empty, 'fraction'),
      handling: interval('robotTime.handling', (w) => w.robotTime.handling, 'fraction'),
      waiting: interval('robotTime.waiting', (w) => w.robotTime.waiting, 'fraction'),
      parked: interval('robotTime.parked', (w) => w.robotTime.parked, 'fraction'),
      ...realism.robotTime,
    },
    ...(realism.waitingBehindFixedFraction ? { waitingBehindFixedFraction: realism.waitingBehindFixedFraction } : {}),
    ...(realism.availability ? { availability: realism.availability } : {}),
    ...(realism.charging ? { charging: realism.charging } : {}),
    ...(realism.breakdowns ? { breakdowns: realism.breakdowns } : {}),
    ...summarizeExecution(scenario, records, perReplication.map((w) => w.throughputPerHour), delayBaseline),
    deadlocks: perReplicationInterval((w) => w.deadlocks, 'nonNegative'),
    livelocks: perReplicationInterval((w) => w.livelocks, 'nonNegative'),
    gridlocks: perReplicationInterval((w) => w.gridlocks, 'nonNegative'),
    deadlockRobotHoursLost: perReplicationInterval((w) => w.deadlockRobotHoursLost, 'nonNegative'),
    capacityRun: demand.kind === 'saturated',
    capacityPoolDepth: records[0].poolDepth === null ? null : Math.max(...records.map((r) => r.poolDepth ?? 0)),
    capacityPoolAtCap: records[0].poolDepth === null ? null : records.some((r) => r.poolMaxDepth !== null && r.poolMaxDepth !== undefined && (r.poolDepth ?? 0) >= r.poolMaxDepth),
    loadedMetersPerTask: {
      delivered: interval('loadedMetersPerTask.delivered', (w) => w.deliveredLoadedMeters, 'nonNegative'),
      released: interval('loadedMetersPerTask.released', (w) => w.releasedLoadedMeters, 'nonNegative'),
    },
    demandMixGap: { pickup: demandMixGap(stations, 'pickup'), drop: demandMixGap(stations, 'drop') },
    busyRobots: interval('busyRobots', (w) => w.busyRobots, 'nonNegative'),
    parkedWhileTasksOpenFraction: interval('parkedWhileTasksOpenFraction', (w) => w.parkedWhileTasksOpenFraction, 'fraction'),
    collisions: sum((r) => r.collisions),
    tasks: {
      released: sum((r) => r.tasks.released),
      delivered: sum((r) => r.tasks.delivered),
      open: sum((r) => r.open),
      openByState: { waiting: sum((r) => r.tasks.open), held: sum((r) => r.tasks.held), assigned: sum((r) => r.tasks.assigned), pickedUp: sum((r) => r.tasks.pickedUp) },
    },
    trace:
      demand.kind === 'trace'
        ? {
            tasks: demand.tasks.length,
            notReleased: records[0].traceTasksNotReleased ?? 0,
            endedAtLastTaskSeconds: records.every((r) => r.endedAtLastTraceDelivery) ? Math.max(...records.map((r) => r.endTick * r.tickSeconds)) : null,
          }
        : null,
    warmupSeconds: warmup.seconds,
    warmup,
    batchMeans:
      intervalMethod === 'batch-means'
        ? {
            maximumLag1: batchMeansRule.maximumLag1,
            minimumBatches: batchMeansRule.minimumBatches,
            unreliable: Object.entries(batchChecks)
              .filter(([, c]) => !c.reliable)
              .map(([name]) => name),
            metrics: batchChecks,
          }
        : null,
    littlesLaw: {
      applicable: stability.stable === true,
      tasksInSystem: inSystem.mean,
      throughputTimesLeadTime: littleRight,
      relativeGap: Math.abs(inSystem.mean - littleRight) / Math.max(1e-12, Math.abs(inSystem.mean)),
    },
    stationGroups: stationGroupSummaries(stations, interval),
    stations,
    wellFormed: wellFormed.wellFormed,
    wellFormedViolation: wellFormed.violation,
    restCellsUsed,
    wellFormedWithRestCells,
    policyLimits,
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

/** JSON with NaN and infinities as null, for the one document `--json` prints. */
export function toJson(value: unknown): string {
  return JSON.stringify(value, (_key, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2);
}
