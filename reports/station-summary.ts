/**
 * Station figures of a run summary: per station (means over replications of the
 * post-warm-up window) and per group, where work queues (pickups; pick stations in round
 * trips) and drops, each group with its busiest station by name. A station's utilisation is
 * its busy share (a robot in service); for stations where work queues, idle time while work
 * waits is split into "no robot assigned to that work" (the fleet or the dispatch is short)
 * and "a robot assigned but still on its way" (travel). Queue time comes from the deadlock
 * detector's wait-for chains (sim/deadlock-detector.ts).
 */
import { StationGroup, type ReplicationRecord } from '../sim/engine.ts';
import { cellLabel, CellKind, type Layout } from '../sim/layout.ts';
import type { Interval } from './stats/index.ts';
import type { StationWindow, WindowMetrics } from './window-metrics.ts';

export interface StationRow {
  cell: string;
  /** The point's kind on the layout. */
  kind: 'pickup' | 'drop';
  /** Where it is summarized: `pickup` = work queues there (P points; D pick stations in round trips), `drop` = a drop (chute). */
  group: 'pickup' | 'drop';
  utilisation: number;
  idleFraction: number;
  /** Idle while its work waited with no robot assigned; null for drops. */
  noRobotFraction: number | null;
  /** Idle while a robot assigned to its work was on its way; null for drops. */
  travellingFraction: number | null;
  /** Robot-seconds queued behind the robot in service, per hour. */
  queueSecondsPerHour: number;
  /** DESIGN's starved share: the same as noRobotFraction (null for drops). */
  starvedFraction: number | null;
  /** Whole run, all replications: tasks released with work at the station, and handlings finished there. */
  tasksReleased: number;
  tasksServed: number;
}

export interface StationGroupSummary {
  utilisation: Interval;
  idleFraction: Interval;
  noRobotWhileWorkWaitsFraction: Interval | null;
  robotTravellingWhileWorkWaitsFraction: Interval | null;
  queueSecondsPerHour: Interval;
  busiest: { cell: string; utilisation: number } | null;
}

const mean = (values: number[]): number => (values.length > 0 ? values.reduce((s, v) => s + v, 0) / values.length : NaN);
const orNull = (value: number): number | null => (Number.isFinite(value) ? value : null);

export function stationRows(layout: Layout, records: ReplicationRecord[], perReplication: WindowMetrics[]): StationRow[] {
  const record = records[0];
  return Array.from(record.stationCells, (cell, s) => {
    const pick = (f: (w: StationWindow) => number) => mean(perReplication.map((w) => f(w.stations[s])));
    const noRobot = pick((w) => w.noRobotFraction);
    return {
      cell: cellLabel(layout, cell),
      kind: layout.kind[cell] === CellKind.Pickup ? 'pickup' : 'drop',
      group: record.stationGroups[s] === StationGroup.Drop ? 'drop' : 'pickup',
      utilisation: pick((w) => w.utilisation),
      idleFraction: pick((w) => w.idleFraction),
      noRobotFraction: orNull(noRobot),
      travellingFraction: orNull(pick((w) => w.travellingFraction)),
      queueSecondsPerHour: pick((w) => w.queueSecondsPerHour),
      starvedFraction: orNull(noRobot),
      tasksReleased: records.reduce((sum, r) => sum + r.metrics.stationReleased[s], 0),
      tasksServed: records.reduce((sum, r) => sum + r.metrics.stationServed[s], 0),
    };
  });
}

/**
 * How far the tasks served stray from the demand's mix over a group's stations: the total
 * variation distance between the shares of tasks served and of tasks released per station,
 * 1/2 sum |served_s / served - released_s / released| (0 = served in the demand's
 * proportions, 1 = disjoint). Whole run, all replications; null for a group without
 * stations or tasks. A policy that leaves one station's work waiting (token passing holding
 * back tasks for a popular chute, nearest-task dispatch skipping a far induct) shows a gap
 * that in-flight tasks alone cannot explain: its throughput is not sustainable for the mix.
 */
export function demandMixGap(rows: StationRow[], group: 'pickup' | 'drop'): number | null {
  const members = rows.filter((row) => row.group === group);
  const released = members.reduce((sum, row) => sum + row.tasksReleased, 0);
  const served = members.reduce((sum, row) => sum + row.tasksServed, 0);
  if (members.length === 0 || released === 0 || served === 0) return null;
  return members.reduce((sum, row) => sum + Math.abs(row.tasksServed / served - row.tasksReleased / released), 0) / 2;
}

/** `interval` forms an interval (named, within bounds) from one value per sample (replication or batch). */
export function stationGroupSummaries(
  rows: StationRow[],
  interval: (name: string, pick: (w: WindowMetrics) => number, bounds: 'fraction' | 'nonNegative') => Interval,
): { pickup: StationGroupSummary; drop: StationGroupSummary } {
  const group = (name: 'pickup' | 'drop'): StationGroupSummary => {
    let busiest: StationGroupSummary['busiest'] = null;
    for (const row of rows) {
      if (row.group !== name || !Number.isFinite(row.utilisation)) continue;
      if (busiest === null || row.utilisation > busiest.utilisation) busiest = { cell: row.cell, utilisation: row.utilisation };
    }
    const key = `stationGroups.${name}`;
    return {
      utilisation: interval(`${key}.utilisation`, (w) => w.stationGroups[name].utilisation, 'fraction'),
      idleFraction: interval(`${key}.idleFraction`, (w) => w.stationGroups[name].idleFraction, 'fraction'),
      noRobotWhileWorkWaitsFraction: name === 'drop' ? null : interval(`${key}.noRobotWhileWorkWaitsFraction`, (w) => w.stationGroups[name].noRobotFraction, 'fraction'),
      robotTravellingWhileWorkWaitsFraction:
        name === 'drop' ? null : interval(`${key}.robotTravellingWhileWorkWaitsFraction`, (w) => w.stationGroups[name].travellingFraction, 'fraction'),
      queueSecondsPerHour: interval(`${key}.queueSecondsPerHour`, (w) => w.stationGroups[name].queueSecondsPerHour, 'nonNegative'),
      busiest,
    };
  };
  return { pickup: group('pickup'), drop: group('drop') };
}
