/**
 * Planning a whole task for one robot against the reserved paths of the others, as the
 * decoupled policies do (token passing, Ma et al. AAMAS 2017; prioritized planning, Silver
 * 2005): space-time A* to the pickup with room to stay for the pickup handling, then to the
 * drop (and back to the shelf's storage point for a round trip), ending in a rest that no
 * other robot's path crosses. The returned path lists the robot's cell at every tick from
 * `tick` to the end of its last handling, waits included, matching the engine's handling
 * convention (see sim/policy.ts).
 *
 * Forward-only robots (`world.turnTicks` > 0): every leg is searched with headings, from
 * the robot's heading (and, for the first leg, from the tick its turn or held-back move in
 * progress ends); a leg after a stop starts with the heading the robot arrived with, since
 * it does not turn while being loaded or unloaded. The path still lists cells only: the
 * robot turns, while it stands, towards the direction of its next move (sim/plan-execution.ts).
 */
import { unreachable, type DistanceTables } from '../../sim/distance-table.ts';
import { newPath } from '../../sim/path-slab.ts';
import type { ReservationTable } from '../../sim/reservation-table.ts';
import type { SearchRequest, SpaceTimeAStar } from '../../sim/space-time-astar.ts';
import type { World } from '../../sim/world.ts';

export interface TaskPlan {
  path: Int32Array;
  /** Tick at which the robot reaches the pickup. */
  pickupTick: number;
}

export interface Planner {
  world: World;
  table: ReservationTable;
  search: SpaceTimeAStar;
  distances: DistanceTables;
}

/** Where a task path goes on to after its last stop: `find(lastStop)` writes up to three free rest spots, nearest first, into `spots` and returns how many. */
export interface ParkingAfter {
  find(lastStop: number): number;
  readonly spots: Int32Array;
}

/**
 * Plans robot r, standing at `from` at `tick`, through the task's stops; null when any leg
 * fails. With `parkingAfter`, the path does not end on the last stop: it goes on to the
 * first of those rest spots it can rest on (in the order given, at most three tried),
 * and the plan fails when none works.
 *
 * `pickupLeg` > 0: the search's `path` holds, with that length, the leg to the pickup the
 * first search would return (the same request, `pickupLegRequest`, on the same table, just
 * searched by the caller): it is used instead of searching again, unless the horizon is
 * raised for this plan (a longer horizon may let the search choose another path).
 */
export function planTask(planner: Planner, robot: number, from: number, tick: number, task: number, parkingAfter?: ParkingAfter, pickupLeg = -1): TaskPlan | null {
  const { world } = planner;
  const heading = world.robotHeading[robot];
  stopCells[0] = world.taskPickup[task];
  stopHolds[0] = world.taskPickupTicks[task];
  stopCells[1] = world.taskDrop[task];
  stopHolds[1] = world.taskDropTicks[task];
  let stopCount = 2;
  if (world.taskReturn[task] >= 0) {
    stopCells[2] = world.taskReturn[task];
    stopHolds[2] = world.taskReturnTicks[task];
    stopCount = 3;
  }
  if (!parkingAfter) {
    // The last leg is read from the search's own buffer: no search runs before `assemble`.
    const pickupTick = planStops(planner, robot, from, tick, heading, stopCount, true, pickupLeg, false);
    return pickupTick < 0 ? null : { path: assemble(stopCount, null, planner.search.path), pickupTick };
  }
  const lastStop = stopCells[stopCount - 1];
  // Without a free spot the plan cannot end well: fail before searching the task's legs.
  const spotCount = parkingAfter.find(lastStop);
  if (spotCount === 0) return null;
  const pickupTick = planStops(planner, robot, from, tick, heading, stopCount, false);
  if (pickupTick < 0) return null;
  const arrival = tick + legTicks(stopCount);
  const arrivalHeading = lastLegHeading;
  for (let i = 0; i < spotCount; i++) {
    const leg = planRest(planner, robot, lastStop, arrival, parkingAfter.spots[i], arrivalHeading, arrival);
    if (leg) return { path: assemble(stopCount, leg), pickupTick };
  }
  // No parking spot to go on to: no plan. Resting on the drop instead would block it for
  // every other task (measured on the demo hall with 40 robots and 38 spots: 3377 instead
  // of 4590 deliveries in 2 h); the robot waits for a spot, the task for another robot.
  return null;
}

// Scratch for one plan at a time (planning is single-threaded): the stops of the task and
// the leg found to each (copied out of the search's own buffer, `SpaceTimeAStar.find`), so
// the whole path is allocated once, at its final length.
const stopCells = new Int32Array(3);
const stopHolds = new Int32Array(3);
const legs = [new Int32Array(256), new Int32Array(256), new Int32Array(256)];
const legLength = new Int32Array(3);
/** Heading of the robot at the end of the last leg planStops searched. */
let lastLegHeading = 0;

/** Ticks from the start of the first leg to the end of the last stop's handling. */
function legTicks(stopCount: number): number {
  let ticks = 0;
  for (let i = 0; i < stopCount; i++) ticks += legLength[i] - 1 + stopHolds[i];
  return ticks;
}

/**
 * The planned legs with the handling waits between them, then `rest` (a leg from the last
 * stop on) if given. `lastLeg`: where the last leg is when `planStops` left it in the
 * search's buffer (not copied), else null.
 */
function assemble(stopCount: number, rest: Int32Array | null, lastLeg: Int32Array | null = null): Int32Array {
  const path = newPath(1 + legTicks(stopCount) + (rest ? rest.length - 1 : 0));
  let offset = 0;
  for (let i = 0; i < stopCount; i++) {
    const leg = lastLeg !== null && i === stopCount - 1 ? lastLeg : legs[i];
    // Every leg after the first starts on the previous leg's last cell: skip it. Loops, not
    // set()/fill(): legs are tens of cells, and each call (with its subarray) costs more.
    for (let k = i === 0 ? 0 : 1, length = legLength[i]; k < length; k++) path[offset++] = leg[k];
    const cell = stopCells[i];
    for (let end = offset + stopHolds[i]; offset < end; ) path[offset++] = cell;
  }
  if (rest) for (let k = 1; k < rest.length; k++) path[offset++] = rest[k];
  return path;
}

/**
 * Searches the legs to the first `stopCount` stops into `legs`; returns the tick of arrival
 * at the pickup, or -1 when a leg fails. `restAtEnd`: the last stop ends in a rest;
 * otherwise it is held for its handling only. `copyLast` false: the last leg stays in the
 * search's `path` only (its length in `legLength`), for a caller that assembles the path
 * before the next search; a plan's cells are then copied once, not twice.
 */
function planStops(planner: Planner, robot: number, from: number, tick: number, heading: number, stopCount: number, restAtEnd: boolean, pickupLeg = -1, copyLast = true): number {
  const { table, search, distances } = planner;
  let readyTick = readyTickOf(planner.world, robot, tick);
  let estimate = 64;
  let previous = from;
  for (let i = 0; i < stopCount; i++) {
    estimate += 3 * distances.distance(previous, stopCells[i]) + stopHolds[i];
    previous = stopCells[i];
  }
  const horizon = table.horizon;
  table.ensureHorizon(estimate);
  // The caller's leg is the first search's own answer while the horizon stays as it was.
  if (table.horizon !== horizon) pickupLeg = -1;
  let cell = from;
  let t = tick;
  let pickupTick = -1;
  for (let i = 0; i < stopCount; i++) {
    const goal = stopCells[i];
    const hold = stopHolds[i];
    const length = i === 0 && pickupLeg > 0 ? pickupLeg : search.find(requestFor(robot, cell, t, goal, distances.to(goal), hold, i === stopCount - 1 && restAtEnd, heading, readyTick));
    if (length < 0) return -1;
    legLength[i] = length;
    if (copyLast || i < stopCount - 1) {
      if (legs[i].length < length) legs[i] = new Int32Array(2 * length);
      const leg = legs[i];
      const found = search.path;
      for (let k = 0; k < length; k++) leg[k] = found[k];
    }
    heading = search.lastHeading;
    t += length - 1;
    if (i === 0) pickupTick = t;
    t += hold;
    readyTick = t;
    cell = goal;
  }
  lastLegHeading = heading;
  return pickupTick;
}

/** The request of a task's first leg (to the pickup) as `planTask` searches it, for a caller that searches that leg first (`pickupLeg`). */
export function pickupLegRequest(planner: Planner, robot: number, from: number, tick: number, task: number): SearchRequest {
  const world = planner.world;
  const pickup = world.taskPickup[task];
  return requestFor(robot, from, tick, pickup, planner.distances.to(pickup), world.taskPickupTicks[task], false, world.robotHeading[robot], readyTickOf(world, robot, tick));
}

/** First tick at which robot r can turn or move: after a turn in progress or a held-back move (at least `tick`). */
export function readyTickOf(world: World, robot: number, tick: number): number {
  return Math.max(tick, world.robotTurnUntil[robot], world.robotHeldUntil[robot]);
}

/**
 * Plans a move to `goal` ending in a rest there (parking). Starts from the robot's own
 * heading and ready tick unless given (a leg after a task's last stop).
 */
export function planRest(
  planner: Planner,
  robot: number,
  from: number,
  tick: number,
  goal: number,
  heading = planner.world.robotHeading[robot],
  readyTick = readyTickOf(planner.world, robot, tick),
): Int32Array | null {
  planner.table.ensureHorizon(3 * planner.distances.distance(from, goal) + 64);
  return planner.search.search(requestFor(robot, from, tick, goal, planner.distances.to(goal), 0, true, heading, readyTick));
}

/** One search request object, refilled for every search (the search reads it during the call only). */
const request: SearchRequest = { robot: 0, start: 0, startTick: 0, goal: 0, heuristic: new Int32Array(0), holdTicks: 0, restForever: false, startHeading: 0, readyTick: 0, deadline: Infinity };

/** The request for one search (no deadline: a caller that wants one sets `deadline` on the returned object). */

export function requestFor(
  robot: number,
  start: number,
  startTick: number,
  goal: number,
  heuristic: Int32Array,
  holdTicks: number,
  restForever: boolean,
  startHeading = 0,
  readyTick = startTick,
): SearchRequest {
  request.robot = robot;
  request.start = start;
  request.startTick = startTick;
  request.goal = goal;
  request.heuristic = heuristic;
  request.holdTicks = holdTicks;
  request.restForever = restForever;
  request.startHeading = startHeading;
  request.readyTick = readyTick;
  request.deadline = Infinity;
  return request;
}

/**
 * The rest spots (marked parking, then the fleet's rest cells: sim/rest-cells.ts) that are
 * not the end of any robot's path and are reachable from `from`, nearest first (ties: the
 * earlier in `spots`, so marked parking first). Writes at most `out.length` of them into
 * `out` and returns how many; allocates nothing (it runs for every parking decision).
 */
export function freeParkingSpots(spots: Int32Array, distances: DistanceTables, table: ReservationTable, from: number, out: Int32Array): number {
  const toFrom = distances.to(from);
  const endRobot = table.endRobot;
  const limit = out.length;
  let count = 0;
  for (let i = 0; i < spots.length; i++) {
    const c = spots[i];
    // The end test first: with a full fleet most spots end a path, and their distance is not read.
    if (endRobot[c] >= 0) continue;
    const d = toFrom[c];
    if (d >= unreachable) continue;
    if (count === limit && d >= toFrom[out[limit - 1]]) continue;
    // Insertion into the short sorted buffer; equal distances keep list order.
    let j = count < limit ? count++ : limit - 1;
    while (j > 0 && toFrom[out[j - 1]] > d) {
      out[j] = out[j - 1];
      j--;
    }
    out[j] = c;
  }
  return count;
}
