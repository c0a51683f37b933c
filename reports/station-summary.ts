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

export function stationRows(layout: Layout, record: ReplicationRecord, perReplication: WindowMetrics[]): StationRow[] {
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
    };
  });
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
