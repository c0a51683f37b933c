/**
 * runs.csv and summary.csv of a sweep (csv-stringify): one row per run with the run's own
 * figures, and one row per parameter point with the intervals of reports/sweep-point.ts
 * (Student t over its replications, clipped to each figure's range, no lead-time interval
 * at an unstable point: the run summary's rules). Built row by row from run lines, so a
 * sweep of any length is written with bounded memory.
 *
 * Spreadsheet safety: a cell written `17:10` is read by spreadsheet programs as a clock
 * time, so cells are written `x17:y10` in these files (README, "Sweep outputs").
 */
import { stringify } from 'csv-stringify/sync';
import { figureValue, sweepFigures, type PointAccumulator, type RunLine } from './sweep-point.ts';

export type { RunLine } from './sweep-point.ts';
export { PointAccumulator } from './sweep-point.ts';

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

function stableText(value: unknown): string {
  return value === true ? 'true' : value === false ? 'false' : '';
}

export function runsCsvHeader(parameters: readonly string[]): string {
  return stringify([['run', 'id', 'point', 'replication', ...parameters, 'stable', 'leadTimeIncludesOpenTasks', ...sweepFigures.map((f) => f.name), 'collisions', 'released', 'delivered']]);
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
      stableText(s.stable),
      stableText(s.leadTimeIncludesOpenTasks),
      ...sweepFigures.map((f) => round(figureValue(f, s))),
      s.collisions ?? '',
      s.tasks?.released ?? '',
      s.tasks?.delivered ?? '',
    ],
  ]);
}

export function summaryCsvHeader(parameters: readonly string[]): string {
  const columns = ['point', ...parameters, 'replications', 'stable', 'stabilityVerdict', 'stableShare', 'leadTimeIsLowerBound'];
  for (const { name } of sweepFigures) columns.push(`${name}Mean`, `${name}HalfWidth`, `${name}Low`, `${name}High`);
  columns.push('collisions');
  return stringify([columns]);
}

/** One row per parameter point: the intervals of reports/sweep-point.ts (the run summary's rules). */
export function summaryCsvRow(point: PointAccumulator, parameters: readonly string[], confidence: number): string {
  const summary = point.summary(confidence);
  const row: (string | number)[] = [
    summary.point,
    ...parameters.map((p) => spreadsheetValue(summary.parameters[p])),
    summary.replications,
    stableText(summary.stable),
    summary.stabilityVerdict ?? '',
    summary.stableShare === null ? '' : round(summary.stableShare),
    stableText(summary.leadTimeIsLowerBound),
  ];
  for (const { name } of sweepFigures) {
    const interval = summary.figures[name];
    if (interval === null) row.push('', '', '', '');
    else row.push(round(interval.mean), round(interval.halfWidth), round(interval.low), round(interval.high));
  }
  row.push(summary.collisions);
  return stringify([row]);
}
