/**
 * Fleet size by hand, the spreadsheet method that simulation improves on: Groover,
 * Automation, Production Systems, and Computer-Integrated Manufacturing, ch. 10 (vehicle
 * systems analysis):
 *
 *   cycle time per delivery  Tc = load time + loaded distance / speed
 *                                 + unload time + empty distance / speed
 *   workload                 WL = deliveries per hour x Tc
 *   available time per robot AT = 3600 s x availability x traffic factor x efficiency
 *   robots                   n  = ceil(WL / AT)
 *
 * Here the distances are the layout's true shortest-path distances (not straight lines),
 * averaged over the demand's pickup and drop choices, and handling times are the
 * scenario's means. The empty trip is taken as the way back from the drop to a pickup: for
 * independent pickup and drop choices its mean equals the loaded mean (grid distances are
 * symmetric), and for a trace it is each task's own way back (exact on private lanes). In
 * round-trip mode (goods-to-person) the loaded part is shelf to station and back, handling
 * is lift + pick + set down, and the empty trip is from one shelf spot to the next.
 * Per-station handling (`handling.stations`) enters as each station's mean weighted by its
 * share of tasks; the availability factor comes from the battery and breakdowns
 * (experiments/availability.ts: MTBF / (MTBF + MTTR) x the share of time not charging).
 * Congestion, station queues and dispatch choices are what this leaves out.
 */
import type { HandlingSpec, PointChoice } from '../sim/model.ts';
import { tickSecondsOf } from '../sim/model.ts';
import type { SimulationSetup } from '../sim/engine.ts';
import { cellLabel } from '../sim/layout.ts';
import { handAvailability, type HandAvailability } from './availability.ts';

export interface GrooverInputs {
  deliveriesPerHour: number;
  loadSeconds: number;
  unloadSeconds: number;
  loadedTravelSeconds: number;
  emptyTravelSeconds: number;
  /** Share of time a robot is up (1 = never down). */
  availability?: number;
  /** Share of time not lost to traffic; a number, or one per fleet size (e.g. Groover's 1 - 0.05 (n - 1)). */
  trafficFactor?: number | ((robots: number) => number);
  /** Share of time the robot is usefully worked. */
  efficiency?: number;
}

export interface GrooverResult {
  cycleSeconds: number;
  workloadSecondsPerHour: number;
  /** WL / AT at full traffic factor: the fractional fleet. */
  robotsExact: number;
  robots: number;
  /** 3600 / Tc: what one robot delivers per hour with nothing in its way. */
  perRobotPerHour: number;
}

export function grooverFleetSize(inputs: GrooverInputs): GrooverResult {
  const cycleSeconds = inputs.loadSeconds + inputs.loadedTravelSeconds + inputs.unloadSeconds + inputs.emptyTravelSeconds;
  const workloadSecondsPerHour = inputs.deliveriesPerHour * cycleSeconds;
  const availability = inputs.availability ?? 1;
  const efficiency = inputs.efficiency ?? 1;
  const traffic = inputs.trafficFactor ?? 1;
  const available = (n: number) => 3600 * availability * efficiency * (typeof traffic === 'number' ? traffic : traffic(n));
  const robotsExact = workloadSecondsPerHour / available(1);
  // With a traffic factor that depends on n, the smallest n whose n x AT(n) covers WL.
  let robots = Math.max(1, Math.ceil(robotsExact - 1e-9));
  if (typeof traffic !== 'number') {
    while (robots * available(robots) < workloadSecondsPerHour - 1e-9 && robots < 1e6) robots++;
  }
  return { cycleSeconds, workloadSecondsPerHour, robotsExact, robots, perRobotPerHour: cycleSeconds > 0 ? 3600 / cycleSeconds : Infinity };
}

/** Probability of each cell of `cells` under a point choice (as sim/demand.ts draws them). */
export function pointProbabilities(cells: Int32Array, choice: PointChoice): Float64Array {
  const p = new Float64Array(cells.length);
  if (choice.kind === 'uniform') p.fill(1 / cells.length);
  else if (choice.kind === 'zipf') for (let i = 0; i < cells.length; i++) p[i] = 1 / Math.pow(i + 1, choice.skew);
  else for (let i = 0; i < cells.length; i++) p[i] = choice.weights.get(cells[i]) ?? 0;
  const total = p.reduce((s, v) => s + v, 0);
  for (let i = 0; i < p.length; i++) p[i] /= total;
  return p;
}

/** Mean handling seconds as the engine applies them (fixed times rounded to whole ticks). */
export function meanHandlingSeconds(spec: HandlingSpec, tickSeconds: number): number {
  switch (spec.dist) {
    case 'fixed':
      return Math.max(0, Math.round(spec.seconds / tickSeconds)) * tickSeconds;
    case 'uniform':
      return (spec.min + spec.max) / 2;
    case 'exponential':
      return spec.mean;
  }
}

export interface HandFormula extends GrooverResult {
  tasksPerHour: number;
  loadSeconds: number;
  unloadSeconds: number;
  loadedMeters: number;
  emptyMeters: number;
  loadedTravelSeconds: number;
  emptyTravelSeconds: number;
  /** Robots that even zero empty travel could not do with: ceil(rate x (handling + loaded travel) / 3600). A safe lower bound for the search. */
  lowerBoundRobots: number;
  /** The busiest station's limit: it serves one robot at a time, so the rate cannot pass 3600 / (its share x its handling seconds). */
  stationLimit: { cell: string; kind: 'pickup' | 'drop'; share: number; handlingSeconds: number; tasksPerHour: number } | null;
  /** The availability factor in AT and its two parts (1 without a battery or breakdowns). */
  availability: HandAvailability;
}

/** Groover's estimate for a scenario at `tasksPerHour`, from its layout, demand and handling. */
export function handFormulaFor(setup: SimulationSetup, tasksPerHour: number): HandFormula {
  const { scenario, layout, distances } = setup;
  const tickSeconds = tickSecondsOf(scenario);
  const metersPerCell = scenario.units.cellMeters;
  const speed = scenario.units.robotSpeedMps;
  const demand = scenario.demand;
  const roundTrip = demand.mode === 'round-trip';
  // Mean handling per station: its own override (handling.stations) or the default.
  const stations = scenario.handling.stations;
  const pickupMeanAt = (cell: number) => meanHandlingSeconds(stations?.get(cell)?.pickupSeconds ?? scenario.handling.pickupSeconds, tickSeconds);
  const dropMeanAt = (cell: number) => meanHandlingSeconds(stations?.get(cell)?.dropSeconds ?? scenario.handling.dropSeconds, tickSeconds);
  const pickupCells = roundTrip ? layout.storage : layout.pickups;

  // Shares of pickups and drops, and the mean loaded and empty distances in cells.
  let pickupShare: Float64Array;
  let dropShare: Float64Array;
  let loadedCells = 0;
  let emptyCells = 0;
  if (demand.kind === 'trace') {
    const pickIndex = new Map<number, number>();
    pickupCells.forEach((c, i) => pickIndex.set(c, i));
    const dropIndex = new Map<number, number>();
    layout.drops.forEach((c, i) => dropIndex.set(c, i));
    pickupShare = new Float64Array(pickupCells.length);
    dropShare = new Float64Array(layout.drops.length);
    const n = demand.tasks.length;
    for (const task of demand.tasks) {
      pickupShare[pickIndex.get(task.pickup)!] += 1 / n;
      dropShare[dropIndex.get(task.drop)!] += 1 / n;
      const d = distances.distance(task.pickup, task.drop);
      loadedCells += (roundTrip ? 2 * d : d) / n;
      if (!roundTrip) emptyCells += d / n;
    }
  } else {
    pickupShare = pointProbabilities(pickupCells, demand.pickups);
    dropShare = pointProbabilities(layout.drops, demand.drops);
    for (let i = 0; i < pickupCells.length; i++) {
      if (pickupShare[i] === 0) continue;
      const table = distances.to(pickupCells[i]);
      let sum = 0;
      for (let j = 0; j < layout.drops.length; j++) sum += dropShare[j] * table[layout.drops[j]];
      loadedCells += pickupShare[i] * (roundTrip ? 2 * sum : sum);
      if (!roundTrip) emptyCells += pickupShare[i] * sum;
    }
  }
  if (roundTrip) {
    // Empty: from the shelf spot just served to the next one, both drawn from the pickup shares.
    for (let i = 0; i < pickupCells.length; i++) {
      if (pickupShare[i] === 0) continue;
      const table = distances.to(pickupCells[i]);
      for (let j = 0; j < pickupCells.length; j++) emptyCells += pickupShare[i] * pickupShare[j] * table[pickupCells[j]];
    }
  }
  let pickupMean = 0;
  for (let i = 0; i < pickupCells.length; i++) if (pickupShare[i] > 0) pickupMean += pickupShare[i] * pickupMeanAt(pickupCells[i]);
  let dropMean = 0;
  for (let j = 0; j < layout.drops.length; j++) if (dropShare[j] > 0) dropMean += dropShare[j] * dropMeanAt(layout.drops[j]);
  const loadSeconds = roundTrip ? 2 * pickupMean : pickupMean;
  const unloadSeconds = dropMean;
  const availability = handAvailability(scenario, layout, distances);
  const loadedMeters = loadedCells * metersPerCell;
  const emptyMeters = emptyCells * metersPerCell;
  const result = grooverFleetSize({
    deliveriesPerHour: tasksPerHour,
    loadSeconds,
    unloadSeconds,
    loadedTravelSeconds: loadedMeters / speed,
    emptyTravelSeconds: emptyMeters / speed,
    availability: availability.total,
  });
  const lowerBoundRobots = Math.max(1, Math.ceil((tasksPerHour * (loadSeconds + unloadSeconds + loadedMeters / speed)) / 3600 - 1e-9));

  // Stations (P and D points) serve one robot at a time.
  let stationLimit: HandFormula['stationLimit'] = null;
  const consider = (cells: Int32Array, shares: Float64Array, secondsAt: (cell: number) => number, kind: 'pickup' | 'drop') => {
    for (let i = 0; i < cells.length; i++) {
      const seconds = secondsAt(cells[i]);
      if (shares[i] === 0 || !(seconds > 0)) continue;
      const limit = 3600 / (shares[i] * seconds);
      if (stationLimit === null || limit < stationLimit.tasksPerHour) stationLimit = { cell: cellLabel(layout, cells[i]), kind, share: shares[i], handlingSeconds: seconds, tasksPerHour: limit };
    }
  };
  if (!roundTrip) consider(layout.pickups, pickupShare, pickupMeanAt, 'pickup');
  consider(layout.drops, dropShare, dropMeanAt, 'drop');
  return {
    ...result,
    tasksPerHour,
    loadSeconds,
    unloadSeconds,
    loadedMeters,
    emptyMeters,
    loadedTravelSeconds: loadedMeters / speed,
    emptyTravelSeconds: emptyMeters / speed,
    lowerBoundRobots,
    stationLimit,
    availability,
  };
}
