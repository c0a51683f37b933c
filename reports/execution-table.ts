/**
 * The turning and execution-delay rows and lines of the run table (reports/console-table.ts):
 * quarter turns and the share of robot time spent turning, moves held back, the waits the
 * planned policies' dependency graph imposed, and the throughput lost to delays. Only what
 * the scenario has is shown.
 */
import type { RunSummary } from './summary.ts';
import type { Interval } from './stats/index.ts';

type Unit = 'count' | 'seconds' | 'percent' | 'rate' | 'hours';
type Row = (label: string, interval: Interval, unit: Unit) => string[];

/** Rows for the metric table, after the operating-realism rows. */
export function executionRows(summary: RunSummary, row: Row): string[][] {
  const rows: string[][] = [];
  const turning = summary.turning;
  if (turning) {
    rows.push(row('quarter turns per robot-hour', turning.quarterTurnsPerRobotHour, 'rate'));
    rows.push(row('robot time: turning in place (in travel)', turning.turningFraction, 'percent'));
  }
  const delays = summary.delays;
  if (delays) {
    rows.push(row('moves held back (share of moves)', delays.heldMoveFraction, 'percent'));
    rows.push(row('robot-seconds held back per hour', delays.heldRobotSecondsPerHour, 'rate'));
    if (delays.dependencyWaitsPerHour) rows.push(row('waits imposed by passing order per hour', delays.dependencyWaitsPerHour, 'rate'));
    if (delays.dependencyWaitSecondsPerHour) rows.push(row('robot-seconds of those waits per hour', delays.dependencyWaitSecondsPerHour, 'rate'));
    if (delays.throughputLostPerHour) rows.push(row('throughput lost to delays (tasks/h)', delays.throughputLostPerHour, 'rate'));
  }
  return rows;
}

/** Notes under the table. */
export function executionLines(summary: RunSummary): string[] {
  const lines: string[] = [];
  const turning = summary.turning;
  if (turning) {
    const rounded = turning.modelledTurnSeconds !== turning.turnSeconds ? ` (modelled as ${turning.modelledTurnSeconds} s: whole ticks of ${summary.tickSeconds} s, rounded up)` : '';
    lines.push(`turning: robots drive forward only and turn in place, ${turning.turnSeconds} s per 90 degrees${rounded}, not while being loaded or unloaded`);
  }
  const delays = summary.delays;
  if (delays) {
    const baseline = delays.throughputWithoutDelaysPerHour ? `; ${delays.throughputWithoutDelaysPerHour.mean.toFixed(1)} tasks/h on the same seeds without delays` : '';
    const order = delays.dependencyWaitsPerHour
      ? '; the planned paths keep the order in which robots pass each cell (action dependency graph, Hönig et al. 2019), re-timed as robots fall behind: no re-planning'
      : '';
    lines.push(`delays: a started move is held back with probability ${delays.probabilityPerMove} for ${delays.meanSeconds} s on average${baseline}${order}`);
  }
  return lines;
}
