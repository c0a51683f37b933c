/**
 * Spreadsheet outputs (csv-stringify): one row per replication, the throughput time
 * series, and per-station fractions. Deterministic: no wall-clock values.
 */
import { stringify } from 'csv-stringify/sync';
import type { ReplicationRecord } from '../sim/engine.ts';
import type { ReplicationMetrics, RunSummary } from './summary.ts';
import { intervalLengthOf } from '../sim/metrics.ts';
import { realismColumns } from './realism-csv.ts';

const round = (v: number | null, digits = 6): number | string => (v !== null && Number.isFinite(v) ? Number(v.toFixed(digits)) : '');

const roundOrEmpty = (v: number | null): number | string => (v === null ? '' : round(v));

/** `summary`: adds the charging and breakdown columns when the run has them. */
export function replicationsCsv(records: ReplicationRecord[], perReplication: ReplicationMetrics[], summary?: RunSummary): string {
  const rows = records.map((record, i) => {
    const w = perReplication[i];
    return {
      replication: record.replication,
      throughputPerHour: round(w.throughputPerHour),
      leadTimeSeconds: round(w.leadTimeSeconds),
      leadTimeP50Seconds: round(w.leadTimeP50Seconds),
      leadTimeP95Seconds: round(w.leadTimeP95Seconds),
      tasksInSystem: round(w.tasksInSystem),
      // Empty for saturated (capacity) runs; lead times of an unstable run count its open tasks' ages.
      // Written out: csv-stringify would print false as an empty cell.
      stable: w.stable === null ? '' : String(w.stable),
      backlogGrowthPerHour: round(w.backlogGrowthPerHour),
      backlogGrowthLow: roundOrEmpty(w.backlogGrowthLow),
      backlogGrowthHigh: roundOrEmpty(w.backlogGrowthHigh),
      openTasksInLeadTime: w.openTasksCounted,
      stationIdleFraction: round(w.stationIdleFraction),
      stationStarvedFraction: round(w.stationStarvedFraction),
      robotLoadedFraction: round(w.robotTime.loaded),
      robotEmptyFraction: round(w.robotTime.empty),
      robotHandlingFraction: round(w.robotTime.handling),
      robotWaitingFraction: round(w.robotTime.waiting),
      robotParkedFraction: round(w.robotTime.parked),
      deadlocks: w.deadlocks,
      livelocks: w.livelocks,
      gridlocks: w.gridlocks,
      deadlockRobotHoursLost: round(w.deadlockRobotHoursLost),
      busyRobots: round(w.busyRobots),
      parkedWhileTasksOpenFraction: round(w.parkedWhileTasksOpenFraction),
      pickupStationUtilisation: round(w.stationGroups.pickup.utilisation),
      pickupStationNoRobotFraction: round(w.stationGroups.pickup.noRobotFraction),
      pickupStationTravellingFraction: round(w.stationGroups.pickup.travellingFraction),
      dropStationUtilisation: round(w.stationGroups.drop.utilisation),
      deliveredAfterWarmup: w.delivered,
      released: record.released,
      delivered: record.delivered,
      open: record.open,
      collisions: record.collisions,
      agentSteps: record.agentSteps,
      ...(summary ? realismColumns(summary, w) : {}),
    };
  });
  return stringify(rows, { header: true });
}

export function throughputSeriesCsv(records: ReplicationRecord[], cutIntervals: number): string {
  const rows: Record<string, number | string>[] = [];
  for (const record of records) {
    const m = record.metrics;
    const tickSeconds = record.tickSeconds;
    for (let i = 0; i < m.intervalCount; i++) {
      const ticks = intervalLengthOf(m, i);
      const hours = (ticks * tickSeconds) / 3600;
      rows.push({
        replication: record.replication,
        startSeconds: round(i * m.intervalTicks * tickSeconds),
        endSeconds: round((i * m.intervalTicks + ticks) * tickSeconds),
        released: m.releases[i],
        delivered: m.deliveries[i],
        throughputPerHour: round(m.deliveries[i] / hours),
        tasksInSystem: round(m.tasksInSystemArea[i] / ticks),
        warmup: i < cutIntervals ? 1 : 0,
      });
    }
  }
  return stringify(rows, { header: true });
}

export function stationsCsv(summary: RunSummary): string {
  return stringify(
    summary.stations.map((s) => ({
      cell: s.cell,
      kind: s.kind,
      idleFraction: round(s.idleFraction),
      starvedFraction: round(s.starvedFraction),
      group: s.group,
      utilisation: round(s.utilisation),
      noRobotFraction: round(s.noRobotFraction),
      travellingFraction: round(s.travellingFraction),
      queueSecondsPerHour: round(s.queueSecondsPerHour),
      tasksReleased: s.tasksReleased,
      tasksServed: s.tasksServed,
    })),
    { header: true },
  );
}
