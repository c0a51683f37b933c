/**
 * The operating-realism metrics of one replication over a window of whole sample intervals
 * [from, to) (the post-warm-up run, or one batch): charging and breakdown shares of robot
 * time, availability, charger utilisation and queue, and the lead-time split of the tasks
 * delivered in the window. Pure function of the record; seconds and tasks per hour out.
 */
import type { ReplicationRecord } from '../sim/engine.ts';

export interface RealismWindow {
  /** Robot-ticks at, going to or queued for a charger, and broken down (robot-ticks, for the robot-time split). */
  chargingRobotTicks: number;
  brokenRobotTicks: number;
  /** Share of robot time standing blocked behind robots broken down or charging (0 without upkeep). */
  waitingBehindFixedFraction: number;
  /** Share of robot time not broken down (1 without breakdowns). */
  availability: number;
  /** Share of charger time with a robot charging, over all chargers, and per charger. */
  chargerUtilisation: number;
  chargerUtilisationByCharger: number[];
  /** Time-average number of robots queued for a charger. */
  chargeQueueRobots: number;
  chargesPerHour: number;
  failuresPerHour: number;
  /** Robots whose charge reached 0 in the window (events). */
  ranFlat: number;
  /** Mean parts of the lead time of tasks delivered in the window, seconds (NaN when none was delivered; the waiting part also in capacity runs). */
  leadParts: { waitingForRobot: number; emptyTravel: number; loadedTravel: number; handling: number };
}

export function realismWindow(record: ReplicationRecord, from: number, to: number, delivered: number, robotTicksOutsideUpkeep: number): RealismWindow {
  const tickSeconds = record.tickSeconds;
  const intervalTicks = record.metrics.intervalTicks;
  const ticks = Math.min(record.endTick, to * intervalTicks) - from * intervalTicks;
  const hours = (ticks * tickSeconds) / 3600;

  const timing = record.taskTiming;
  const parts = [0, 0, 0, 0];
  for (let i = from; i < to; i++) for (let p = 0; p < 4; p++) parts[p] += timing.leadPartTicks[i * 4 + p];
  const perTask = (p: number) => (delivered > 0 ? (parts[p] / delivered) * tickSeconds : NaN);
  // A capacity run's pool of waiting tasks is artificial (saturated demand), so its waiting part is not reported; the task cycle's parts are.
  const capacityRun = record.poolDepth !== null;
  const leadParts = { waitingForRobot: capacityRun ? NaN : perTask(0), emptyTravel: perTask(1), loadedTravel: perTask(2), handling: perTask(3) };

  const upkeep = record.upkeep;
  if (upkeep === null) {
    return { chargingRobotTicks: 0, brokenRobotTicks: 0, waitingBehindFixedFraction: 0, availability: 1, chargerUtilisation: NaN, chargerUtilisationByCharger: [], chargeQueueRobots: NaN, chargesPerHour: NaN, failuresPerHour: NaN, ranFlat: 0, leadParts };
  }
  const m = upkeep.metrics;
  const chargers = m.chargerCount;
  let charging = 0;
  let broken = 0;
  let queued = 0;
  let behindFixed = 0;
  let charges = 0;
  let failures = 0;
  let ranFlat = 0;
  const busy: number[] = new Array(chargers).fill(0);
  for (let i = from; i < to; i++) {
    charging += m.chargingRobotTicks[i];
    broken += m.brokenRobotTicks[i];
    queued += m.queuedRobotTicks[i];
    behindFixed += m.behindFixedRobotTicks[i];
    charges += m.chargesStarted[i];
    failures += m.failures[i];
    ranFlat += m.ranFlat[i];
    for (let c = 0; c < chargers; c++) busy[c] += m.chargerBusyTicks[i * chargers + c];
  }
  const robotTicks = robotTicksOutsideUpkeep + charging + broken;
  const byCharger = busy.map((b) => (ticks > 0 ? b / ticks : NaN));
  return {
    chargingRobotTicks: charging,
    brokenRobotTicks: broken,
    waitingBehindFixedFraction: robotTicks > 0 ? behindFixed / robotTicks : NaN,
    availability: robotTicks > 0 ? 1 - broken / robotTicks : NaN,
    chargerUtilisation: chargers > 0 && ticks > 0 ? busy.reduce((s, b) => s + b, 0) / (chargers * ticks) : NaN,
    chargerUtilisationByCharger: byCharger,
    chargeQueueRobots: ticks > 0 ? queued / ticks : NaN,
    chargesPerHour: hours > 0 ? charges / hours : NaN,
    failuresPerHour: hours > 0 ? failures / hours : NaN,
    ranFlat,
    leadParts,
  };
}
