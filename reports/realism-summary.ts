/**
 * The operating-realism parts of the run summary (README "Operating realism"): charging,
 * breakdowns and availability, the lead-time split, and the hourly profile. Each block
 * appears only when the scenario has what it measures (a battery, breakdowns, an hourly
 * profile), so a scenario without them gives the summary it gave before; the lead-time
 * split is always there.
 *
 * Intervals come from the summary's own helpers (Student t over replications, or batch
 * means of one replication), so they are formed exactly like every other metric's.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { cellLabel, parseLayout } from '../sim/layout.ts';
import { steadyStateAvailability } from '../sim/breakdowns.ts';
import { meanHandlingSeconds } from '../sim/station-handling.ts';
import { intervalOf, pairedDifferenceInterval, type Interval } from './stats/index.ts';
import type { WindowMetrics } from './window-metrics.ts';

type Bounds = 'fraction' | 'nonNegative' | 'none';

/** The summary's interval helpers (reports/summary.ts). */
export interface IntervalHelpers {
  interval(name: string, pick: (w: WindowMetrics) => number, bounds: Bounds): Interval;
  perReplicationInterval(pick: (w: WindowMetrics) => number, bounds: Bounds): Interval;
  leadInterval(name: string, pick: (w: WindowMetrics) => number): Interval;
}

export interface LeadTimeSplitSummary {
  /** Release to the assignment that carried the task (round trips: also waiting for the shelf). */
  waitingForRobotSeconds: Interval;
  /** Assignment to arrival at the pickup. */
  emptyTravelSeconds: Interval;
  /** Pickup done to arrival at the drop. */
  loadedTravelSeconds: Interval;
  /** Pickup and drop handling. */
  handlingSeconds: Interval;
}

export interface ChargingSummary {
  chargers: number;
  runHours: number;
  chargeHours: number;
  chargeBelow: number;
  chargeUpTo: number;
  /** Share of charger time with a robot charging, over all chargers. */
  chargerUtilisation: Interval;
  /** Per charger, mean over replications. */
  byCharger: { cell: string; utilisation: number }[];
  /** Time-average number of robots waiting for a charger. */
  queueRobots: Interval;
  chargesPerHour: Interval;
  /** Robots whose charge reached 0 before they were plugged in, summed over replications (whole run). */
  ranFlat: number;
  /** Set when robots ran flat: the figures are then optimistic. */
  warning: string | null;
}

export interface BreakdownSummary {
  mtbfHours: number;
  mttrMinutes: number;
  /** MTBF / (MTBF + MTTR): the steady-state availability of the alternating renewal process. */
  expectedAvailability: number;
  failuresPerHour: Interval;
  /** Failures that waited for the policy's safe stop (planned policies), over replications, whole run. */
  deferredFailures: number;
  /** Their mean wait, seconds (null when none waited). */
  meanDeferralSeconds: number | null;
  /**
   * Throughput without breakdowns minus with them, paired over replications on the same
   * seeds (common random numbers); null when no run without breakdowns was made.
   */
  throughputLostPerHour: Interval | null;
}

export interface HourlyRow {
  /** Hour of the profile, 0-based (run hours h with h mod profile length = hour). */
  hour: number;
  multiplier: number;
  releasedPerHour: Interval;
  throughputPerHour: Interval;
  /** Mean lead time of the tasks released in this hour of the profile and delivered before the end. */
  leadTimeSeconds: Interval;
}

export interface HourlySummary {
  /** Profile hour with the highest multiplier (the first of equals): what a site is sized for. */
  peakHour: number;
  /** Whole run hours after the warm-up cut that entered the rows. */
  hoursCounted: number;
  rows: HourlyRow[];
}

export interface RealismSummary {
  robotTime: { charging?: Interval; broken?: Interval };
  /** With a battery or breakdowns: share of robot time standing blocked behind robots broken down or charging (part of robotTime.waiting). */
  waitingBehindFixedFraction?: Interval;
  availability?: Interval;
  charging?: ChargingSummary;
  breakdowns?: BreakdownSummary;
  leadTimeSplit: LeadTimeSplitSummary;
  hourly?: HourlySummary;
}

export function summarizeRealism(
  scenario: Scenario,
  records: ReplicationRecord[],
  perReplication: WindowMetrics[],
  helpers: IntervalHelpers,
  cutIntervals: number,
  baselineThroughput: number[] | null,
): RealismSummary {
  const { interval, perReplicationInterval, leadInterval } = helpers;
  const battery = scenario.fleet.battery;
  const breakdowns = scenario.faults?.breakdowns;
  const result: RealismSummary = {
    robotTime: {},
    leadTimeSplit: {
      waitingForRobotSeconds: leadInterval('leadTimeSplit.waitingForRobotSeconds', (w) => w.realism.leadParts.waitingForRobot),
      emptyTravelSeconds: leadInterval('leadTimeSplit.emptyTravelSeconds', (w) => w.realism.leadParts.emptyTravel),
      loadedTravelSeconds: leadInterval('leadTimeSplit.loadedTravelSeconds', (w) => w.realism.leadParts.loadedTravel),
      handlingSeconds: leadInterval('leadTimeSplit.handlingSeconds', (w) => w.realism.leadParts.handling),
    },
  };
  if (battery) result.robotTime.charging = interval('robotTime.charging', (w) => w.robotTime.charging, 'fraction');
  if (battery || breakdowns) result.waitingBehindFixedFraction = interval('waitingBehindFixedFraction', (w) => w.realism.waitingBehindFixedFraction, 'fraction');
  if (breakdowns) {
    result.robotTime.broken = interval('robotTime.broken', (w) => w.robotTime.broken, 'fraction');
    result.availability = interval('availability', (w) => w.realism.availability, 'fraction');
  }
  if (battery) {
    const layout = parseLayout(scenario.layoutText);
    const ranFlat = records.reduce((s, r) => s + (r.upkeep?.ranFlatRobots ?? 0), 0);
    result.charging = {
      chargers: layout.chargers.length,
      ...battery,
      chargerUtilisation: interval('charging.chargerUtilisation', (w) => w.realism.chargerUtilisation, 'fraction'),
      byCharger: Array.from(layout.chargers, (cell, c) => ({ cell: cellLabel(layout, cell), utilisation: mean(perReplication.map((w) => w.realism.chargerUtilisationByCharger[c])) })),
      queueRobots: interval('charging.queueRobots', (w) => w.realism.chargeQueueRobots, 'nonNegative'),
      chargesPerHour: interval('charging.chargesPerHour', (w) => w.realism.chargesPerHour, 'nonNegative'),
      ranFlat,
      warning:
        ranFlat > 0
          ? `${ranFlat} robot${ranFlat === 1 ? '' : 's'} ran flat (charge reached 0 before reaching a charger) over ${records.length} replication${records.length === 1 ? '' : 's'}: the simulation let them go on, so throughput is optimistic; raise fleet.battery.chargeBelow or add chargers`
          : null,
    };
  }
  if (breakdowns) {
    const deferred = records.reduce((s, r) => s + (r.upkeep?.metrics.deferredFailures ?? 0), 0);
    const deferredTicks = records.reduce((s, r) => s + (r.upkeep?.metrics.deferredTicks ?? 0), 0);
    result.breakdowns = {
      mtbfHours: meanHandlingSeconds(breakdowns.timeToFailure) / 3600,
      mttrMinutes: meanHandlingSeconds(breakdowns.repair) / 60,
      expectedAvailability: steadyStateAvailability(breakdowns),
      failuresPerHour: perReplicationInterval((w) => w.realism.failuresPerHour, 'nonNegative'),
      deferredFailures: deferred,
      meanDeferralSeconds: deferred > 0 ? (deferredTicks / deferred) * records[0].tickSeconds : null,
      throughputLostPerHour:
        baselineThroughput === null ? null : pairedDifferenceInterval(baselineThroughput, perReplication.map((w) => w.throughputPerHour), scenario.run.confidence),
    };
  }
  const demand = scenario.demand;
  if (demand.kind === 'poisson' && demand.profile !== null) result.hourly = hourlyProfile(records, demand.profile, cutIntervals, scenario.run.confidence);
  return result;
}

/**
 * Per hour of the profile: tasks released and delivered per hour, and the mean lead time of
 * tasks by the hour they were released, over the whole run hours after the warm-up cut; an
 * interval over replications for each.
 */
function hourlyProfile(records: ReplicationRecord[], profile: number[], cutIntervals: number, confidence: number): HourlySummary {
  const first = records[0];
  const timing = first.taskTiming;
  const cutTicks = cutIntervals * first.metrics.intervalTicks;
  const firstHour = Math.ceil(cutTicks / timing.ticksPerHour);
  const lastHour = Math.floor(first.endTick / timing.ticksPerHour); // exclusive: whole hours only
  const length = profile.length;
  const rows: HourlyRow[] = [];
  const over = (values: number[]): Interval => {
    const finite = values.filter((v) => Number.isFinite(v));
    return finite.length === 0 ? { mean: NaN, halfWidth: null, low: null, high: null, n: 0 } : intervalOf(finite, confidence);
  };
  for (let hour = 0; hour < length; hour++) {
    const released: number[] = [];
    const delivered: number[] = [];
    const lead: number[] = [];
    for (const record of records) {
      const t = record.taskTiming;
      let count = 0;
      let releasedSum = 0;
      let deliveredSum = 0;
      let leadTicks = 0;
      let leadTasks = 0;
      for (let h = firstHour; h < lastHour; h++) {
        if (h % length !== hour) continue;
        count++;
        releasedSum += t.releasedByHour[h];
        deliveredSum += t.deliveredByHour[h];
        leadTicks += t.leadTicksByReleaseHour[h];
        leadTasks += t.deliveredByReleaseHour[h];
      }
      if (count === 0) continue;
      released.push(releasedSum / count);
      delivered.push(deliveredSum / count);
      lead.push(leadTasks > 0 ? (leadTicks / leadTasks) * record.tickSeconds : NaN);
    }
    rows.push({ hour, multiplier: profile[hour], releasedPerHour: over(released), throughputPerHour: over(delivered), leadTimeSeconds: over(lead) });
  }
  let peakHour = 0;
  for (let h = 1; h < length; h++) if (profile[h] > profile[peakHour]) peakHour = h;
  return { peakHour, hoursCounted: Math.max(0, lastHour - firstHour), rows };
}

function mean(values: number[]): number {
  const finite = values.filter((v) => Number.isFinite(v));
  return finite.length > 0 ? finite.reduce((s, v) => s + v, 0) / finite.length : NaN;
}
