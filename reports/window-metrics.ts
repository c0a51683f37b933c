/**
 * The metrics of one replication over a window of whole sample intervals [from, to): the
 * whole post-warm-up run, or one batch of a batch-means analysis. Pure function of the
 * recorded intervals. Times come out in seconds and rates in tasks per hour; ticks stay
 * inside.
 */
import { StationGroup, type ReplicationRecord } from '../sim/engine.ts';
import { quantileSorted } from './stats/index.ts';
import { realismWindow, type RealismWindow } from './realism-window.ts';

/** Station shares over the window; for a group, averaged over its stations (NaN for an empty group). */
export interface StationWindow {
  /** Share of time a robot was in service at the station (busy). */
  utilisation: number;
  /** 1 - utilisation. */
  idleFraction: number;
  /** Idle while work for the station waited and no robot was assigned to any of it; NaN for drops. */
  noRobotFraction: number;
  /** Idle while work waited and a robot assigned to it was still on its way; NaN for drops. */
  travellingFraction: number;
  /** Robot-seconds queued behind the robot in service there, per hour. */
  queueSecondsPerHour: number;
}

export interface WindowMetrics {
  throughputPerHour: number;
  /** Idle share averaged over the stations where work queues (pickups; pick stations in round trips). */
  stationIdleFraction: number;
  /** Share of time such a station was idle while its work waited for a robot none was assigned to, averaged over them. */
  stationStarvedFraction: number;
  /** NaN when no task was delivered in the window, and for capacity runs (saturated demand). */
  leadTimeSeconds: number;
  leadTimeP50Seconds: number;
  leadTimeP95Seconds: number;
  /** NaN for capacity runs: the pool of a saturated run is artificial. */
  tasksInSystem: number;
  /** Shares of robot time; `charging` and `broken` are 0 without a battery or breakdowns. */
  robotTime: { loaded: number; empty: number; handling: number; waiting: number; parked: number; charging: number; broken: number };
  /** Charging, breakdowns and the lead-time split (reports/realism-window.ts). */
  realism: RealismWindow;
  /** Episodes detected in the window, by kind (sim/deadlock-detector.ts). */
  deadlocks: number;
  livelocks: number;
  gridlocks: number;
  /** Robot-hours lost in the deadlock and livelock episodes detected in the window. */
  deadlockRobotHoursLost: number;
  /** Mean number of robots holding a task. */
  busyRobots: number;
  /** Share of robot time parked (no task, not moving) while released tasks were open. */
  parkedWhileTasksOpenFraction: number;
  /** Mean loaded distance of the tasks delivered / released in the window (meters). */
  deliveredLoadedMeters: number;
  releasedLoadedMeters: number;
  delivered: number;
  /** Tasks still open at the end whose ages entered the lead times (0 unless asked for). */
  openTasksCounted: number;
  stationGroups: { pickup: StationWindow; drop: StationWindow };
  /** Per station (in record.stationCells order). */
  stations: StationWindow[];
  /** Per station: idle share, and the starved share (no robot assigned while work waits; NaN for drops). */
  stationIdle: number[];
  stationStarved: number[];
}

/**
 * `countOpenTasks`: for a window that ends at the end of the run, lead times also count the
 * age of every task still open then (its lead time so far, a lower bound of its real one).
 * An unstable run's lead time from delivered tasks alone is biased low: the tasks that wait
 * longest are the ones never delivered.
 */
export function windowMetrics(record: ReplicationRecord, from: number, to: number, countOpenTasks = false): WindowMetrics {
  const m = record.metrics;
  const tickSeconds = record.tickSeconds;
  const capacityRun = record.poolDepth !== null;
  const fromTick = from * m.intervalTicks;
  const toTick = Math.min(record.endTick, to * m.intervalTicks);
  const ticks = toTick - fromTick;
  const hours = (ticks * tickSeconds) / 3600;

  let delivered = 0;
  let releasedCount = 0;
  let deliveredBefore = 0;
  let inSystemArea = 0;
  let busyTicks = 0;
  let parkedWhileOpen = 0;
  let deliveredCells = 0;
  let releasedCells = 0;
  const activity = [0, 0, 0, 0, 0];
  for (let i = 0; i < from; i++) deliveredBefore += m.deliveries[i];
  for (let i = from; i < to; i++) {
    delivered += m.deliveries[i];
    releasedCount += m.releases[i];
    inSystemArea += m.tasksInSystemArea[i];
    busyTicks += m.busyRobotTicks[i];
    parkedWhileOpen += m.parkedWhileOpenTicks[i];
    deliveredCells += m.deliveredLoadedCells[i];
    releasedCells += m.releasedLoadedCells[i];
    for (let a = 0; a < 5; a++) activity[a] += m.robotTicks[i * 5 + a];
  }
  const realism = realismWindow(record, from, to, delivered, activity.reduce((s, v) => s + v, 0));
  const robotTicks = activity.reduce((s, v) => s + v, 0) + realism.chargingRobotTicks + realism.brokenRobotTicks || 1;

  const stationCount = m.stationCount;
  const sums = (array: ArrayLike<number>): number[] => {
    const out: number[] = new Array(stationCount).fill(0);
    for (let i = from; i < to; i++) for (let s = 0; s < stationCount; s++) out[s] += array[i * stationCount + s];
    return out;
  };
  const busy = sums(m.stationBusy);
  const noRobot = sums(m.stationNoRobot);
  const travelling = sums(m.stationTravelling);
  const queued = sums(m.stationQueue);
  const stations: StationWindow[] = [];
  for (let s = 0; s < stationCount; s++) {
    const drop = record.stationGroups[s] === StationGroup.Drop;
    const utilisation = ticks > 0 ? busy[s] / ticks : NaN;
    stations.push({
      utilisation,
      idleFraction: 1 - utilisation,
      noRobotFraction: drop || ticks <= 0 ? NaN : noRobot[s] / ticks,
      travellingFraction: drop || ticks <= 0 ? NaN : travelling[s] / ticks,
      queueSecondsPerHour: hours > 0 ? (queued[s] * tickSeconds) / hours : NaN,
    });
  }
  const groupMean = (group: number): StationWindow => {
    const members = stations.filter((_, s) => record.stationGroups[s] === group);
    const mean = (pick: (w: StationWindow) => number) => (members.length > 0 ? members.reduce((sum, w) => sum + pick(w), 0) / members.length : NaN);
    return {
      utilisation: mean((w) => w.utilisation),
      idleFraction: mean((w) => w.idleFraction),
      noRobotFraction: mean((w) => w.noRobotFraction),
      travellingFraction: mean((w) => w.travellingFraction),
      queueSecondsPerHour: mean((w) => w.queueSecondsPerHour),
    };
  };
  const pickupGroup = groupMean(StationGroup.Pickup);

  // Lead times of tasks delivered inside the window: they are stored in delivery order, and
  // the per-interval delivery counts say where the window's deliveries start.
  const deliveredLeads = m.leadTicks.subarray(deliveredBefore, deliveredBefore + delivered);
  const open = countOpenTasks && !capacityRun ? record.openTaskReleaseTicks.filter((release) => release < toTick) : [];
  const leads = new Float64Array(deliveredLeads.length + open.length);
  leads.set(deliveredLeads);
  for (let i = 0; i < open.length; i++) leads[deliveredLeads.length + i] = toTick - open[i];
  leads.sort();
  let leadSum = 0;
  for (const v of leads) leadSum += v;
  const hasLeads = leads.length > 0 && !capacityRun;
  const leadMean = hasLeads ? (leadSum / leads.length) * tickSeconds : NaN;
  const p50 = hasLeads ? quantileSorted(leads, 0.5) * tickSeconds : NaN;
  const p95 = hasLeads ? quantileSorted(leads, 0.95) * tickSeconds : NaN;

  const counts = { deadlock: 0, livelock: 0, gridlock: 0 };
  let lostTicks = 0;
  for (const episode of m.episodes) {
    if (episode.detectTick >= fromTick && episode.detectTick < toTick) {
      counts[episode.kind]++;
      if (episode.kind !== 'gridlock') lostTicks += episode.lostTicks;
    }
  }

  return {
    throughputPerHour: hours > 0 ? delivered / hours : NaN,
    stationIdleFraction: pickupGroup.idleFraction,
    stationStarvedFraction: pickupGroup.noRobotFraction,
    leadTimeSeconds: leadMean,
    leadTimeP50Seconds: p50,
    leadTimeP95Seconds: p95,
    tasksInSystem: ticks > 0 && !capacityRun ? inSystemArea / ticks : NaN,
    robotTime: {
      loaded: activity[0] / robotTicks,
      empty: activity[1] / robotTicks,
      handling: activity[2] / robotTicks,
      waiting: activity[3] / robotTicks,
      parked: activity[4] / robotTicks,
      charging: realism.chargingRobotTicks / robotTicks,
      broken: realism.brokenRobotTicks / robotTicks,
    },
    realism,
    deadlocks: counts.deadlock,
    livelocks: counts.livelock,
    gridlocks: counts.gridlock,
    deadlockRobotHoursLost: (lostTicks * tickSeconds) / 3600,
    busyRobots: ticks > 0 ? busyTicks / ticks : NaN,
    parkedWhileTasksOpenFraction: parkedWhileOpen / robotTicks,
    deliveredLoadedMeters: delivered > 0 ? (deliveredCells / delivered) * record.cellMeters : NaN,
    releasedLoadedMeters: releasedCount > 0 ? (releasedCells / releasedCount) * record.cellMeters : NaN,
    delivered,
    openTasksCounted: open.length,
    stationGroups: { pickup: pickupGroup, drop: groupMean(StationGroup.Drop) },
    stations,
    stationIdle: stations.map((w) => w.idleFraction),
    stationStarved: stations.map((w) => w.noRobotFraction),
  };
}
