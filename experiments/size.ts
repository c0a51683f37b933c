/**
 * `size`: how many robots does this floor need for a target rate? Runs the scenario's
 * demand at the target (Poisson with its profile, pickups and drops; or its trace scaled
 * in time to the target rate), searches the fleet size (experiments/size-search.ts) with
 * replications on worker threads, and puts beside the answer:
 *
 * - Groover's hand formula at the same rate (experiments/hand-formula.ts), so the user
 *   sees what congestion costs;
 * - the capacity (saturated demand) of fleets around the answer: the headroom of the
 *   recommended fleet in percent, the knee (the first step where the capacity added per
 *   added robot falls under `kneeShare` of what the smallest fleet on the curve delivers
 *   per robot) and where adding robots starts to hurt (capacity falls, beyond noise).
 *
 * Replication i of every fleet sees the same tasks (common random numbers), so neighbouring
 * fleets differ by the fleet, not by luck.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord, SimulationSetup } from '../sim/engine.ts';
import { InputError } from '../sim/errors.ts';
import { summarize, type ReplicationMetrics, type RunSummary } from '../reports/summary.ts';
import type { Interval } from '../reports/stats/index.ts';
import { safetyNote } from '../reports/safety.ts';
import { prepareSetup } from './replications.ts';
import { handFormulaFor, type HandFormula } from './hand-formula.ts';
import { createInlinePool, createPool, type ReplicationPool } from './pool.ts';
import { scenarioKey } from './run-id.ts';
import { searchFleetSize, type SizeFigures } from './size-search.ts';

export interface SizeOptions {
  target: number;
  min?: number;
  max?: number;
  replications: number;
  maxReplications?: number;
  leadP95Limit: number | null;
  workers: number;
  /** Share of the first robots' per-robot capacity under which an added robot "stops paying". */
  kneeShare?: number;
  /** Called as fleets are evaluated (robots, replications, what). */
  progress?: (text: string) => void;
  /** Builds a scenario's setup (default: the registry's policy); a test may bring its own policy, then runs stay in this thread. */
  prepare?: (scenario: Scenario) => SimulationSetup;
}

export interface CurvePoint {
  robots: number;
  replications: number;
  throughputPerHour: Interval;
  /** Tasks per hour released in the measured window (what the fleet was offered). */
  offeredPerHour: number;
  throughputPerRobot: number;
  leadTimeSeconds: Interval;
  leadTimeP95Seconds: Interval;
  stationStarvedFraction: Interval;
  stationIdleFraction: Interval;
  busyRobots: Interval | null;
  stable: boolean | null;
  /** The three-way reading of the stability test (RunSummary.stabilityVerdict): 'undetermined' when the backlog-growth interval still reaches material growth. */
  stabilityVerdict: 'stable' | 'unstable' | 'undetermined' | null;
  backlogGrowthPerHour: Interval;
  verdict: 'meets' | 'fails' | 'undecided';
  because: string;
}

export interface CapacityPoint {
  robots: number;
  replications: number;
  throughputPerHour: Interval;
  throughputPerRobot: number;
  /** Capacity added per robot added since the previous point (null on the first). */
  marginalPerAddedRobot: number | null;
  /** The capacity pool reached its cap with robots idle (RunSummary.capacityPoolAtCap): an upper bound that needs that deep a queue. */
  poolAtCap: boolean;
}

export interface SizeDocument {
  scenario: string;
  target: number;
  demand: 'poisson' | 'trace';
  policy: string;
  recommendedRobots: number | null;
  reason: string | null;
  handFormulaRobots: number;
  handFormula: HandFormula;
  knee: { robots: number; marginalPerAddedRobot: number; firstRobotsPerRobot: number; share: number } | null;
  congestionFrom: number | null;
  capacity: { robots: number; throughputPerHour: Interval; headroomPercent: number | null; poolAtCap: boolean } | null;
  leadP95LimitSeconds: number | null;
  range: { min: number; max: number };
  replications: number;
  maxReplications: number;
  confidence: number;
  hours: number;
  seed: number;
  curve: CurvePoint[];
  capacityCurve: CapacityPoint[];
  runs: { atTarget: number; capacity: number };
  safety: string;
  timing: { wallSeconds: number };
}

/** The scenario's demand at the target rate. `scenario` has Poisson demand already at the target (the loader set it) or a trace to scale. */
export function demandAtTarget(scenario: Scenario, target: number): Scenario {
  const demand = scenario.demand;
  if (demand.kind !== 'trace') return scenario;
  const last = demand.tasks[demand.tasks.length - 1].releaseSeconds;
  if (!(last > 0)) throw new InputError(`--target: the trace ${demand.tracePath} releases every task at time 0, expected a trace spread over time to scale to ${target} tasks/h`);
  const rate = demand.tasks.length / (last / 3600);
  const factor = rate / target;
  const scaledHours = (last * factor) / 3600;
  if (scaledHours < scenario.run.hours) {
    throw new InputError(
      `--target: the trace (${demand.tasks.length} tasks at ${rate.toFixed(1)} tasks/h) scaled to ${target} tasks/h lasts ${scaledHours.toFixed(2)} h, shorter than run.hours ${scenario.run.hours}: expected --hours ${Math.floor(scaledHours * 100) / 100} or less, or a longer trace`,
    );
  }
  return { ...scenario, demand: { ...demand, tasks: demand.tasks.map((t) => ({ ...t, releaseSeconds: t.releaseSeconds * factor })) } };
}

/**
 * The same floor with a task always ready for every robot: what a fleet can deliver at
 * most. Null for a trace: its tasks pair pickups with drops, which saturated demand (drawn
 * point by point) cannot keep, so its capacity is not measured.
 */
export function saturatedVersion(scenario: Scenario): Scenario | null {
  const demand = scenario.demand;
  if (demand.kind === 'saturated') return scenario;
  if (demand.kind === 'poisson') return { ...scenario, demand: { kind: 'saturated', mode: demand.mode, pickups: demand.pickups, drops: demand.drops } };
  return null;
}

/** Keeps every replication run for each fleet size and summarizes on demand. */
class FleetRuns {
  private readonly records = new Map<number, ReplicationRecord[]>();
  runs = 0;
  constructor(
    private readonly base: Scenario,
    private readonly pool: ReplicationPool,
    private readonly progress?: (text: string) => void,
    private readonly what = 'at target',
  ) {}

  scenarioFor(robots: number): Scenario {
    return { ...this.base, fleet: { robots } };
  }

  async summary(robots: number, replications: number): Promise<{ summary: RunSummary; perReplication: ReplicationMetrics[]; offeredPerHour: number }> {
    const have = this.records.get(robots) ?? [];
    if (have.length < replications) {
      const scenario = this.scenarioFor(robots);
      const key = scenarioKey(scenario);
      this.progress?.(`${robots} robots ${this.what}: replications ${have.length + 1}-${replications}`);
      const more = await Promise.all(Array.from({ length: replications - have.length }, (_, k) => this.pool.run(key, scenario, have.length + k)));
      this.runs += more.length;
      have.push(...more);
      this.records.set(robots, have);
    }
    const used = have.slice(0, replications);
    const parts = summarize(this.scenarioFor(robots), used, 0);
    // Tasks released after the warm-up cut, per hour of the window, averaged over replications.
    let offered = 0;
    for (const record of used) {
      const m = record.metrics;
      let released = 0;
      for (let i = parts.cutIntervals; i < m.intervalCount; i++) released += m.releases[i];
      const windowHours = ((record.endTick - parts.cutIntervals * m.intervalTicks) * record.tickSeconds) / 3600;
      offered += released / windowHours / used.length;
    }
    return { summary: parts.summary, perReplication: parts.perReplication, offeredPerHour: offered };
  }
}

/** Fields the run summary may not have yet (busy robots), read when present. */
function optional<T>(value: unknown, check: (v: unknown) => boolean): T | null {
  return check(value) ? (value as T) : null;
}
const isInterval = (v: unknown) => v !== null && typeof v === 'object' && 'mean' in (v as object);

export async function sizeFleet(scenarioAtTarget: Scenario, options: SizeOptions): Promise<SizeDocument> {
  const started = performance.now();
  const scenario = demandAtTarget(scenarioAtTarget, options.target);
  const prepare = options.prepare ?? ((s: Scenario) => prepareSetup(s));
  const setup = prepare(scenario);
  const hand = handFormulaFor(setup, options.target);
  const floorCells = setup.layout.floorCells.length;
  const min = Math.max(1, options.min ?? 1);
  const max = Math.min(floorCells, options.max ?? Math.max(2 * hand.robots, hand.robots + 10, min));
  if (min > max) throw new InputError(`--min: got ${min}, expected at most --max (${max}${options.max === undefined ? ', the default' : ''})`);
  const maxReplications = options.maxReplications ?? Math.max(options.replications, 4 * options.replications);
  const kneeShare = options.kneeShare ?? 0.5;

  const document: SizeDocument = {
    scenario: scenario.name,
    target: options.target,
    demand: scenario.demand.kind === 'trace' ? 'trace' : 'poisson',
    policy: scenario.policy.name,
    recommendedRobots: null,
    reason: null,
    handFormulaRobots: hand.robots,
    handFormula: hand,
    knee: null,
    congestionFrom: null,
    capacity: null,
    leadP95LimitSeconds: options.leadP95Limit,
    range: { min, max },
    replications: options.replications,
    maxReplications,
    confidence: scenario.run.confidence,
    hours: scenario.run.hours,
    seed: scenario.run.seed,
    curve: [],
    capacityCurve: [],
    runs: { atTarget: 0, capacity: 0 },
    safety: safetyNote,
    timing: { wallSeconds: 0 },
  };

  // A station serves one robot at a time: past its limit no fleet can keep up.
  if (hand.stationLimit && hand.stationLimit.tasksPerHour <= options.target) {
    const s = hand.stationLimit;
    document.reason = `the ${s.kind} point ${s.cell} serves one robot at a time, ${s.handlingSeconds.toFixed(1)} s per task, and gets ${(s.share * 100).toFixed(1)}% of the tasks: it can handle at most ${s.tasksPerHour.toFixed(0)} tasks/h, not the target ${options.target}`;
    document.timing.wallSeconds = (performance.now() - started) / 1000;
    return document;
  }

  const pool = options.workers > 1 && !options.prepare ? createPool(options.workers) : createInlinePool(prepare);
  try {
    const atTarget = new FleetRuns(scenario, pool, options.progress);
    const saturated = saturatedVersion(scenario);
    const capacityRuns = saturated ? new FleetRuns(saturated, pool, options.progress, 'saturated') : null;
    const figuresOf = (summary: RunSummary, offeredPerHour: number): SizeFigures => ({
      robots: summary.robots,
      replications: summary.replications,
      throughputPerHour: summary.throughputPerHour,
      stable: summary.stable,
      backlogGrowthPerHour: summary.stable === null ? null : summary.backlogGrowthPerHour,
      materialGrowthPerHour: summary.stable === null ? null : summary.stability.materialGrowthPerHour,
      leadTimeP95Seconds: summary.leadTimeP95Seconds,
      offeredPerHour,
    });
    const summaries = new Map<number, RunSummary>();
    const offered = new Map<number, number>();
    const result = await searchFleetSize({
      evaluator: {
        async evaluate(robots, replications) {
          const { summary, offeredPerHour } = await atTarget.summary(robots, replications);
          summaries.set(robots, summary);
          offered.set(robots, offeredPerHour);
          return figuresOf(summary, offeredPerHour);
        },
      },
      target: options.target,
      min: Math.max(min, Math.min(max, hand.lowerBoundRobots)),
      max,
      start: hand.robots,
      replications: options.replications,
      maxReplications,
      leadP95Limit: options.leadP95Limit,
    });
    document.recommendedRobots = result.recommended;
    for (const robots of [...result.evaluated.keys()].sort((a, b) => a - b)) {
      const e = result.evaluated.get(robots)!;
      const s = summaries.get(robots)!;
      const loose = s as unknown as Record<string, unknown>;
      document.curve.push({
        robots,
        replications: s.replications,
        throughputPerHour: s.throughputPerHour,
        offeredPerHour: offered.get(robots)!,
        throughputPerRobot: s.throughputPerHour.mean / robots,
        leadTimeSeconds: s.leadTimeSeconds,
        leadTimeP95Seconds: s.leadTimeP95Seconds,
        stationStarvedFraction: s.stationStarvedFraction,
        stationIdleFraction: s.stationIdleFraction,
        busyRobots: optional<Interval>(loose.busyRobots, isInterval),
        stable: s.stable,
        stabilityVerdict: s.stabilityVerdict,
        backlogGrowthPerHour: s.backlogGrowthPerHour,
        verdict: e.verdict,
        because: e.because,
      });
    }
    if (result.recommended === null) {
      // The fleet that came closest: the highest throughput estimate.
      const best = document.curve.reduce((a, b) => (b.throughputPerHour.mean > a.throughputPerHour.mean ? b : a));
      const lowerBound = hand.lowerBoundRobots;
      document.reason =
        lowerBound > max
          ? `even with no empty travel the target needs at least ${lowerBound} robots (handling and loaded travel alone), above --max ${max}`
          : `no fleet from ${Math.max(min, Math.min(max, lowerBound))} to ${max} robots meets ${options.target} tasks/h; the closest, ${best.robots} robots, delivers ${best.throughputPerHour.mean.toFixed(0)}${best.throughputPerHour.halfWidth === null ? '' : ` ± ${best.throughputPerHour.halfWidth.toFixed(0)}`} tasks/h (${best.because})`;
    }

    // Capacity curve around the answer (or the largest fleet tried): headroom, knee, congestion.
    const centre = result.recommended ?? max;
    const sizes = [...new Set([0.25, 0.5, 0.75, 1, 1.25, 1.5, 2].map((f) => Math.round(centre * f)))].filter((n) => n >= 1 && n <= Math.min(floorCells, Math.max(max, centre))).sort((a, b) => a - b);
    const capacityReplications = Math.max(2, Math.min(options.replications, 5));
    let previous: CapacityPoint | null = null;
    let previousInterval: Interval | null = null;
    // All capacity runs at once, so every worker stays busy; read in fleet order after.
    const capacitySummaries = capacityRuns ? await Promise.all(sizes.map((robots) => capacityRuns.summary(robots, capacityReplications))) : [];
    for (let k = 0; k < capacitySummaries.length; k++) {
      const robots = sizes[k];
      const { summary } = capacitySummaries[k];
      const point: CapacityPoint = {
        robots,
        replications: summary.replications,
        throughputPerHour: summary.throughputPerHour,
        throughputPerRobot: summary.throughputPerHour.mean / robots,
        marginalPerAddedRobot: previous ? (summary.throughputPerHour.mean - previous.throughputPerHour.mean) / (robots - previous.robots) : null,
        poolAtCap: summary.capacityPoolAtCap === true,
      };
      document.capacityCurve.push(point);
      const firstPerRobot = document.capacityCurve[0].throughputPerRobot;
      if (previous && point.marginalPerAddedRobot !== null) {
        if (document.knee === null && point.marginalPerAddedRobot < kneeShare * firstPerRobot) {
          document.knee = { robots: previous.robots, marginalPerAddedRobot: point.marginalPerAddedRobot, firstRobotsPerRobot: firstPerRobot, share: kneeShare };
        }
        const here = summary.throughputPerHour;
        if (document.congestionFrom === null && previousInterval && here.high !== null && previousInterval.low !== null && here.high < previousInterval.low) document.congestionFrom = robots;
      }
      previous = point;
      previousInterval = summary.throughputPerHour;
    }
    if (result.recommended !== null) {
      const atAnswer = document.capacityCurve.find((c) => c.robots === result.recommended) ?? null;
      if (atAnswer) {
        const mean = atAnswer.throughputPerHour.mean;
        document.capacity = { robots: atAnswer.robots, throughputPerHour: atAnswer.throughputPerHour, headroomPercent: Number.isFinite(mean) ? (mean / options.target - 1) * 100 : null, poolAtCap: atAnswer.poolAtCap };
      }
    }
    document.runs = { atTarget: atTarget.runs, capacity: capacityRuns?.runs ?? 0 };
  } finally {
    await pool.close();
  }
  document.timing.wallSeconds = (performance.now() - started) / 1000;
  return document;
}
