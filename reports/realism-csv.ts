/**
 * Spreadsheet outputs of operating realism (csv-stringify; deterministic, no wall-clock):
 * the lead-time split per replication (`lead-time-split.csv`), the hourly profile
 * (`hourly.csv`, with a demand profile), and the charging and breakdown columns that
 * replications.csv gains when the scenario has a battery or breakdowns.
 */
import { stringify } from 'csv-stringify/sync';
import type { Interval } from './stats/index.ts';
import type { ReplicationMetrics, RunSummary } from './summary.ts';

const round = (v: number, digits = 6): number | string => (Number.isFinite(v) ? Number(v.toFixed(digits)) : '');
const roundOrEmpty = (v: number | null): number | string => (v === null ? '' : round(v));

export function leadTimeSplitCsv(perReplication: ReplicationMetrics[]): string {
  return stringify(
    perReplication.map((w) => ({
      replication: w.replication,
      delivered: w.delivered,
      leadTimeSeconds: round(w.leadTimeSeconds),
      waitingForRobotSeconds: round(w.realism.leadParts.waitingForRobot),
      emptyTravelSeconds: round(w.realism.leadParts.emptyTravel),
      loadedTravelSeconds: round(w.realism.leadParts.loadedTravel),
      handlingSeconds: round(w.realism.leadParts.handling),
    })),
    { header: true },
  );
}

/** One row per hour of the demand profile, with each mean and its half-width; null without a profile. */
export function hourlyCsv(summary: RunSummary): string | null {
  if (!summary.hourly) return null;
  const pair = (name: string, v: Interval) => ({ [name]: round(v.mean), [`${name}HalfWidth`]: roundOrEmpty(v.halfWidth) });
  return stringify(
    summary.hourly.rows.map((r) => ({
      hour: r.hour,
      multiplier: r.multiplier,
      peak: r.hour === summary.hourly!.peakHour ? 'true' : 'false',
      ...pair('releasedPerHour', r.releasedPerHour),
      ...pair('throughputPerHour', r.throughputPerHour),
      ...pair('leadTimeSeconds', r.leadTimeSeconds),
    })),
    { header: true },
  );
}

/** Columns replications.csv gains with a battery or breakdowns (none otherwise). */
export function realismColumns(summary: RunSummary, w: ReplicationMetrics): Record<string, number | string> {
  const columns: Record<string, number | string> = {};
  if (summary.charging) {
    columns.robotChargingFraction = round(w.robotTime.charging);
    columns.chargerUtilisation = round(w.realism.chargerUtilisation);
    columns.chargeQueueRobots = round(w.realism.chargeQueueRobots);
    columns.chargesPerHour = round(w.realism.chargesPerHour);
    columns.ranFlat = w.realism.ranFlat;
  }
  if (summary.breakdowns) {
    columns.robotBrokenFraction = round(w.robotTime.broken);
    columns.availability = round(w.realism.availability);
    columns.breakdownsPerHour = round(w.realism.failuresPerHour);
  }
  if (summary.waitingBehindFixedFraction) columns.waitingBehindFixedFraction = round(w.realism.waitingBehindFixedFraction);
  return columns;
}
