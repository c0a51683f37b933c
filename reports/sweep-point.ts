/**
 * One parameter point of a sweep, summarized from its run lines (one replication each,
 * runs.jsonl): the intervals summary.csv writes and the sweep report draws, under the same
 * rules as the run summary (reports/interval-rules.ts), with no second implementation:
 *
 * - over two or more replications, the Student-t interval of the replications' values,
 *   clipped to the figure's range (shares in [0, 1]; counts, rates and times >= 0);
 * - with one replication, that run's own interval (batch means of the run, as `run --reps 1`
 *   gives), except counts per replication (deadlocks, robot-hours lost, whole-run rates,
 *   the warm-up cut), which get the value and no interval;
 * - stability: the verdict of reports/stability.ts over the replications' own backlog
 *   trends (unstable when the pooled growth is significant and material, or when every
 *   replication on its own is; stable when the growth interval lies below the material
 *   growth; undetermined otherwise); at an unstable point the lead times are lower bounds
 *   (the mean of the replications' figures, no interval).
 *
 * Each replication keeps its own warm-up cut (it ran alone), so a point's figures can
 * differ slightly from `run` with the same replications, which cuts all of them at one
 * point. Memory: a few numbers per replication of the point.
 */
import type { Interval } from './stats/index.ts';
import { bounded, noInterval, replicationInterval, unstableLeadTime, type Bounds } from './interval-rules.ts';
import { pooledStability, type TrendVerdict } from './stability.ts';

/** One line of runs.jsonl, as far as the sweep tables and the report read it. */
export interface RunLine {
  id: string;
  run: number;
  point: number;
  replication: number;
  parameters: Record<string, unknown>;
  summary: Record<string, any>;
}

/**
 * How a figure's interval is formed: `mean` over replications (one replication: its own
 * interval), `count` over replications only, `lead` like `mean` but without an interval at
 * an unstable point, `growth` the backlog trend of the stability verdict.
 */
type FigureKind = 'mean' | 'count' | 'lead' | 'growth';

export interface SweepFigure {
  /** Column stem in runs.csv and summary.csv. */
  name: string;
  /** The run summary's interval (or plain number) for this figure. */
  pick: (summary: Record<string, any>) => unknown;
  bounds: Bounds;
  kind: FigureKind;
}

const field =
  (...path: string[]) =>
  (summary: Record<string, any>): unknown =>
    path.reduce<any>((value, key) => (value === null || value === undefined ? undefined : value[key]), summary);

/** The figures of a run summary that the sweep tables carry, in column order. */
export const sweepFigures: SweepFigure[] = [
  { name: 'throughputPerHour', pick: field('throughputPerHour'), bounds: 'nonNegative', kind: 'mean' },
  { name: 'leadTimeSeconds', pick: field('leadTimeSeconds'), bounds: 'nonNegative', kind: 'lead' },
  { name: 'leadTimeP50Seconds', pick: field('leadTimeP50Seconds'), bounds: 'nonNegative', kind: 'lead' },
  { name: 'leadTimeP95Seconds', pick: field('leadTimeP95Seconds'), bounds: 'nonNegative', kind: 'lead' },
  { name: 'tasksInSystem', pick: field('tasksInSystem'), bounds: 'nonNegative', kind: 'mean' },
  { name: 'backlogGrowthPerHour', pick: field('backlogGrowthPerHour'), bounds: 'none', kind: 'growth' },
  { name: 'busyRobots', pick: field('busyRobots'), bounds: 'nonNegative', kind: 'mean' },
  { name: 'parkedWhileTasksOpenFraction', pick: field('parkedWhileTasksOpenFraction'), bounds: 'fraction', kind: 'mean' },
  { name: 'stationIdleFraction', pick: field('stationIdleFraction'), bounds: 'fraction', kind: 'mean' },
  { name: 'stationStarvedFraction', pick: field('stationStarvedFraction'), bounds: 'fraction', kind: 'mean' },
  { name: 'pickupStationUtilisation', pick: field('stationGroups', 'pickup', 'utilisation'), bounds: 'fraction', kind: 'mean' },
  { name: 'pickupStationNoRobotFraction', pick: field('stationGroups', 'pickup', 'noRobotWhileWorkWaitsFraction'), bounds: 'fraction', kind: 'mean' },
  { name: 'pickupStationTravellingFraction', pick: field('stationGroups', 'pickup', 'robotTravellingWhileWorkWaitsFraction'), bounds: 'fraction', kind: 'mean' },
  { name: 'pickupStationQueueSecondsPerHour', pick: field('stationGroups', 'pickup', 'queueSecondsPerHour'), bounds: 'nonNegative', kind: 'mean' },
  { name: 'dropStationUtilisation', pick: field('stationGroups', 'drop', 'utilisation'), bounds: 'fraction', kind: 'mean' },
  { name: 'robotLoadedFraction', pick: field('robotTime', 'loaded'), bounds: 'fraction', kind: 'mean' },
  { name: 'robotEmptyFraction', pick: field('robotTime', 'empty'), bounds: 'fraction', kind: 'mean' },
  { name: 'robotHandlingFraction', pick: field('robotTime', 'handling'), bounds: 'fraction', kind: 'mean' },
  { name: 'robotWaitingFraction', pick: field('robotTime', 'waiting'), bounds: 'fraction', kind: 'mean' },
  { name: 'robotParkedFraction', pick: field('robotTime', 'parked'), bounds: 'fraction', kind: 'mean' },
  { name: 'deadlocks', pick: field('deadlocks'), bounds: 'nonNegative', kind: 'count' },
  { name: 'livelocks', pick: field('livelocks'), bounds: 'nonNegative', kind: 'count' },
  { name: 'gridlocks', pick: field('gridlocks'), bounds: 'nonNegative', kind: 'count' },
  { name: 'deadlockRobotHoursLost', pick: field('deadlockRobotHoursLost'), bounds: 'nonNegative', kind: 'count' },
  { name: 'heldBackTaskSecondsPerHour', pick: field('policyLimits', 'heldBackTaskSecondsPerHour'), bounds: 'nonNegative', kind: 'count' },
  { name: 'warmupSeconds', pick: field('warmupSeconds'), bounds: 'nonNegative', kind: 'count' },
];

/** The number a run line holds for a figure (an interval's mean, or the number itself); NaN when absent. */
export function figureValue(figure: SweepFigure, summary: Record<string, any>): number {
  const v = figure.pick(summary) as any;
  const n = typeof v === 'number' ? v : v !== null && typeof v === 'object' ? v.mean : undefined;
  return typeof n === 'number' && Number.isFinite(n) ? n : NaN;
}

function asInterval(value: unknown): Interval | null {
  if (value === null || typeof value !== 'object') return null;
  const v = value as Record<string, unknown>;
  if (typeof v.mean !== 'number' || !Number.isFinite(v.mean)) return null;
  const orNull = (x: unknown) => (typeof x === 'number' && Number.isFinite(x) ? x : null);
  return { mean: v.mean, halfWidth: orNull(v.halfWidth), low: orNull(v.low), high: orNull(v.high), n: typeof v.n === 'number' ? v.n : 1 };
}

export interface PointSummary {
  point: number;
  parameters: Record<string, unknown>;
  replications: number;
  /** The point's verdict over its replications (false only when growth is shown); null for capacity (saturated) points or when no replication was judged. */
  stable: boolean | null;
  /** The three-way verdict of reports/stability.ts: `undetermined` when the growth interval is too wide to show a bounded backlog. */
  stabilityVerdict: 'stable' | 'unstable' | 'undetermined' | null;
  /** Share of the replications judged stable on their own; null when none was judged. */
  stableShare: number | null;
  /** Lead times are lower bounds here (unstable point): mean only. */
  leadTimeIsLowerBound: boolean;
  /** Figure name -> interval (null when no replication holds the figure). */
  figures: Record<string, Interval | null>;
  collisions: number;
  scenario: string | null;
}

/** Collects one parameter point's run lines (in any order) and summarizes them. */
export class PointAccumulator {
  private readonly values: number[][] = sweepFigures.map(() => []);
  private readonly trends: TrendVerdict[] = [];
  private readonly throughputs: number[] = [];
  private readonly judged: boolean[] = [];
  /** The one replication's own intervals, used when the point has a single replication. */
  private firstIntervals: (Interval | null)[] = [];
  runs = 0;
  collisions = 0;
  scenario: string | null = null;

  constructor(
    readonly point: number,
    readonly parameters: Record<string, unknown>,
  ) {}

  add(line: RunLine): void {
    const s = line.summary ?? {};
    if (this.runs === 0) {
      this.firstIntervals = sweepFigures.map((f) => asInterval(f.pick(s)));
      this.scenario = typeof s.scenario === 'string' ? s.scenario : null;
    }
    this.runs++;
    sweepFigures.forEach((figure, i) => this.values[i].push(figureValue(figure, s)));
    if (s.stable === true || s.stable === false) {
      this.judged.push(s.stable);
      const own = s.stability?.perReplication?.[0];
      // A line's own trend; a summary without one (older lines) falls back to its verdict and growth.
      this.trends.push({
        growthPerHour: typeof own?.growthPerHour === 'number' ? own.growthPerHour : (s.backlogGrowthPerHour?.mean ?? NaN),
        low: typeof own?.low === 'number' ? own.low : (s.backlogGrowthPerHour?.low ?? null),
        high: typeof own?.high === 'number' ? own.high : (s.backlogGrowthPerHour?.high ?? null),
        stable: s.stable,
      });
      this.throughputs.push(figureValue(sweepFigures[0], s));
    }
    this.collisions += typeof s.collisions === 'number' ? s.collisions : 0;
  }

  summary(confidence: number): PointSummary {
    const verdict = this.trends.length > 0 ? pooledStability(this.trends, this.throughputs, confidence) : null;
    const stable = verdict?.stable ?? null;
    const figures: Record<string, Interval | null> = {};
    sweepFigures.forEach((figure, i) => {
      const values = this.values[i].filter((v) => Number.isFinite(v));
      if (values.length === 0) {
        figures[figure.name] = null;
        return;
      }
      if (figure.kind === 'growth' && verdict !== null) {
        figures[figure.name] = bounded(verdict.backlogGrowthPerHour, figure.bounds);
        return;
      }
      if (figure.kind === 'lead' && stable === false) {
        figures[figure.name] = unstableLeadTime(values);
        return;
      }
      if (figure.kind === 'count' || this.runs > 1) {
        figures[figure.name] = replicationInterval(values, confidence, figure.bounds);
        return;
      }
      // One replication: its own interval (already within bounds), or the value alone.
      const own = this.firstIntervals[i];
      figures[figure.name] = own ? bounded(own, figure.bounds) : noInterval(values[0], 1);
    });
    return {
      point: this.point,
      parameters: this.parameters,
      replications: this.runs,
      stable,
      stabilityVerdict: verdict?.verdict ?? null,
      stableShare: this.judged.length > 0 ? this.judged.filter(Boolean).length / this.judged.length : null,
      leadTimeIsLowerBound: stable === false,
      figures,
      collisions: this.collisions,
      scenario: this.scenario,
    };
  }
}

/** Groups run lines by their point (plan order of first appearance) and summarizes each. */
export function sweepPoints(lines: readonly RunLine[], confidence: number): PointSummary[] {
  const points = new Map<number, PointAccumulator>();
  for (const line of lines) {
    let point = points.get(line.point);
    if (!point) {
      const { replication: _replication, ...parameters } = line.parameters ?? {};
      points.set(line.point, (point = new PointAccumulator(line.point, parameters)));
    }
    point.add(line);
  }
  return [...points.values()].sort((a, b) => a.point - b.point).map((p) => p.summary(confidence));
}
