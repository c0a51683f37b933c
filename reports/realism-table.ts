/**
 * The operating-realism rows and lines of the run table (reports/console-table.ts): robot
 * time charging and broken down, availability, the lead-time split, charger use, breakdowns,
 * and the hourly profile. Only what the scenario has is shown.
 */
import type { RunSummary } from './summary.ts';
import type { Interval } from './stats/index.ts';

type Unit = 'count' | 'seconds' | 'percent' | 'rate' | 'hours';
type Row = (label: string, interval: Interval, unit: Unit) => string[];

/** Rows for the metric table, placed after the robot-time rows. */
export function realismRows(summary: RunSummary, row: Row): string[][] {
  const rows: string[][] = [];
  if (summary.robotTime.charging) rows.push(row('robot time: charging (to, queued, on charger)', summary.robotTime.charging, 'percent'));
  if (summary.robotTime.broken) rows.push(row('robot time: broken down', summary.robotTime.broken, 'percent'));
  // Part of "waiting/blocked": robots in a line that ends only at a broken-down or charging robot.
  if (summary.waitingBehindFixedFraction) rows.push(row('robot time: blocked by broken/charging', summary.waitingBehindFixedFraction, 'percent'));
  if (summary.availability) rows.push(row('availability (not broken down)', summary.availability, 'percent'));
  if (summary.charging) {
    rows.push(row('charger utilisation', summary.charging.chargerUtilisation, 'percent'));
    rows.push(row('robots waiting for a charger', summary.charging.queueRobots, 'count'));
  }
  if (summary.breakdowns) rows.push(row('breakdowns per hour (fleet)', summary.breakdowns.failuresPerHour, 'rate'));
  if (summary.breakdowns?.throughputLostPerHour) rows.push(row('throughput lost to breakdowns (tasks/h)', summary.breakdowns.throughputLostPerHour, 'rate'));
  const split = summary.leadTimeSplit;
  rows.push(row('lead time: waiting for a robot (s)', split.waitingForRobotSeconds, 'seconds'));
  rows.push(row('lead time: empty travel (s)', split.emptyTravelSeconds, 'seconds'));
  rows.push(row('lead time: loaded travel (s)', split.loadedTravelSeconds, 'seconds'));
  rows.push(row('lead time: handling (s)', split.handlingSeconds, 'seconds'));
  return rows;
}

/** Notes and warnings under the table. */
export function realismLines(summary: RunSummary, columns: (rows: string[][], header?: string[]) => string): string[] {
  const lines: string[] = [];
  const charging = summary.charging;
  if (charging) {
    lines.push(
      `charging: ${charging.chargers} chargers, battery ${charging.runHours} h run / ${charging.chargeHours} h full charge, to charge below ${pct(charging.chargeBelow)} up to ${pct(charging.chargeUpTo)}; ${charging.chargesPerHour.mean.toFixed(1)} charges/h`,
    );
    if (charging.warning !== null) lines.push(`warning: ${charging.warning}`);
  }
  const breakdowns = summary.breakdowns;
  if (breakdowns) {
    const deferral = breakdowns.meanDeferralSeconds === null ? '' : `; ${breakdowns.deferredFailures} breakdowns waited ${breakdowns.meanDeferralSeconds.toFixed(0)} s on average for the robot's planned path to end (planned policies stop a robot only there)`;
    lines.push(`breakdowns: MTBF ${breakdowns.mtbfHours} h, MTTR ${breakdowns.mttrMinutes} min: expected availability MTBF / (MTBF + MTTR) = ${pct(breakdowns.expectedAvailability)}${deferral}`);
  }
  const hourly = summary.hourly;
  if (hourly) {
    const pctConfidence = Math.round(summary.confidence * 100);
    const cell = (v: Interval, digits: number) => (Number.isFinite(v.mean) ? `${v.mean.toFixed(digits)}${v.halfWidth === null ? '' : ` ± ${v.halfWidth.toFixed(digits)}`}` : '-');
    lines.push('');
    lines.push(`hourly profile (${hourly.hoursCounted} whole hours after the warm-up; ± ${pctConfidence}% half-widths; peak hour ${hourly.peakHour} is what the site is sized for):`);
    lines.push(
      columns(
        hourly.rows.map((r) => [`${r.hour}${r.hour === hourly.peakHour ? ' (peak)' : ''}`, r.multiplier.toFixed(2), cell(r.releasedPerHour, 1), cell(r.throughputPerHour, 1), cell(r.leadTimeSeconds, 1)]),
        ['hour', 'multiplier', 'released/h', 'throughput/h', 'lead time (s)'],
      ),
    );
  }
  return lines;
}

const pct = (v: number) => `${(v * 100).toFixed(0)}%`;
