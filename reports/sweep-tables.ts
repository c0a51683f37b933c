/**
 * runs.csv and summary.csv of a sweep (csv-stringify): one row per run with the run's own
 * figures, and one row per parameter point with Student-t intervals over its replications
 * (each replication's post-warm-up mean is one observation). Built row by row from run
 * lines, so a sweep of any length is written with bounded memory.
 *
 * Spreadsheet safety: a cell written `17:10` is read by spreadsheet programs as a clock
 * time, so cells are written `x17:y10` in these files (README, "Sweep outputs").
 */
import { stringify } from 'csv-stringify/sync';
import { intervalOf } from './stats/index.ts';

/** One line of runs.jsonl, as far as the tables read it. */
export interface RunLine {
  id: string;
  run: number;
  point: number;
  replication: number;
  parameters: Record<string, unknown>;
  summary: Record<string, any>;
}

type Pick = (summary: Record<string, any>) => number | undefined;
const meanOf = (field: string): Pick => (s) => s[field]?.mean;

/** The figures of a run summary that the tables carry, in column order. Fields a summary lacks stay empty. */
const figures: [string, Pick][] = [
  ['throughputPerHour', meanOf('throughputPerHour')],
  ['leadTimeSeconds', meanOf('leadTimeSeconds')],
  ['leadTimeP50Seconds', meanOf('leadTimeP50Seconds')],
  ['leadTimeP95Seconds', meanOf('leadTimeP95Seconds')],
  ['tasksInSystem', meanOf('tasksInSystem')],
  ['backlogGrowthPerHour', meanOf('backlogGrowthPerHour')],
  ['busyRobots', meanOf('busyRobots')],
  ['stationIdleFraction', meanOf('stationIdleFraction')],
  ['stationStarvedFraction', meanOf('stationStarvedFraction')],
  ['robotLoadedFraction', (s) => s.robotTime?.loaded?.mean],
  ['robotEmptyFraction', (s) => s.robotTime?.empty?.mean],
  ['robotHandlingFraction', (s) => s.robotTime?.handling?.mean],
  ['robotWaitingFraction', (s) => s.robotTime?.waiting?.mean],
  ['robotParkedFraction', (s) => s.robotTime?.parked?.mean],
  ['deadlocks', meanOf('deadlocks')],
  ['deadlockRobotHoursLost', meanOf('deadlockRobotHoursLost')],
  ['warmupSeconds', (s) => s.warmupSeconds],
];

const round = (v: number | null | undefined): number | string => (typeof v === 'number' && Number.isFinite(v) ? Number(v.toFixed(6)) : '');

/** A cell label `x:y` as `xX:yY`; any other value as text a spreadsheet keeps as it is. */
export function spreadsheetValue(value: unknown): string | number {
  if (typeof value === 'number') return Number.isFinite(value) ? value : '';
  if (typeof value === 'boolean') return value ? 'true' : 'false';
  if (typeof value === 'string') {
    const cell = /^\s*(\d+)\s*:\s*(\d+)\s*$/.exec(value);
    return cell ? `x${cell[1]}:y${cell[2]}` : value;
  }
  if (value === null || value === undefined) return '';
  // Mappings and lists (weights, profiles) as JSON, with their cell keys renamed too.
  return JSON.stringify(value, (_key, v) => (v !== null && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).map(([k, x]) => [String(spreadsheetValue(k)), x])) : v));
}

function stableText(summary: Record<string, any>): string {
  return summary.stable === true ? 'true' : summary.stable === false ? 'false' : '';
}

export function runsCsvHeader(parameters: readonly string[]): string {
  return stringify([['run', 'id', 'point', 'replication', ...parameters, 'stable', ...figures.map(([name]) => name), 'collisions', 'released', 'delivered']]);
}

export function runsCsvRow(line: RunLine, parameters: readonly string[]): string {
  const s = line.summary;
  return stringify([
    [
      line.run,
      line.id,
      line.point,
      line.replication,
      ...parameters.map((p) => spreadsheetValue(line.parameters[p])),
      stableText(s),
      ...figures.map(([, pick]) => round(pick(s))),
      s.collisions ?? '',
      s.tasks?.released ?? '',
      s.tasks?.delivered ?? '',
    ],
  ]);
}

/** Accumulates one parameter point's replications for summary.csv (numbers only). */
export class PointAccumulator {
  readonly values: number[][] = figures.map(() => []);
  runs = 0;
  stableRuns = 0;
  judgedRuns = 0;
  collisions = 0;
  constructor(
    readonly point: number,
    readonly parameters: Record<string, unknown>,
  ) {}

  add(line: RunLine): void {
    this.runs++;
    figures.forEach(([, pick], i) => {
      const v = pick(line.summary);
      if (typeof v === 'number' && Number.isFinite(v)) this.values[i].push(v);
    });
    if (line.summary.stable === true || line.summary.stable === false) {
      this.judgedRuns++;
      if (line.summary.stable) this.stableRuns++;
    }
    this.collisions += line.summary.collisions ?? 0;
  }
}

export function summaryCsvHeader(parameters: readonly string[]): string {
  const columns = ['point', ...parameters, 'replications', 'stableShare'];
  for (const [name] of figures) columns.push(`${name}Mean`, `${name}HalfWidth`, `${name}Low`, `${name}High`);
  columns.push('collisions');
  return stringify([columns]);
}

export function summaryCsvRow(point: PointAccumulator, parameters: readonly string[], confidence: number): string {
  const row: (string | number)[] = [point.point, ...parameters.map((p) => spreadsheetValue(point.parameters[p])), point.runs, point.judgedRuns > 0 ? round(point.stableRuns / point.judgedRuns) : ''];
  for (const values of point.values) {
    if (values.length === 0) {
      row.push('', '', '', '');
      continue;
    }
    const interval = intervalOf(values, confidence);
    row.push(round(interval.mean), round(interval.halfWidth), round(interval.low), round(interval.high));
  }
  row.push(point.collisions);
  return stringify([row]);
}
