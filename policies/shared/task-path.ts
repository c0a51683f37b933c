/**
 * Planning a whole task for one robot against the reserved paths of the others, as the
 * decoupled policies do (token passing, Ma et al. AAMAS 2017; prioritized planning, Silver
 * 2005): space-time A* to the pickup with room to stay for the pickup handling, then to the
 * drop (and back to the shelf's storage point for a round trip), ending in a rest that no
 * other robot's path crosses. The returned path lists the robot's cell at every tick from
 * `tick` to the end of its last handling, waits included, matching the engine's handling
 * convention (see sim/policy.ts).
 */
import { unreachable, type DistanceTables } from '../../sim/distance-table.ts';
import type { ReservationTable } from '../../sim/reservation-table.ts';
import type { SpaceTimeAStar } from '../../sim/space-time-astar.ts';
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
 */
export function planTask(planner: Planner, robot: number, from: number, tick: number, task: number, parkingAfter?: ParkingAfter): TaskPlan | null {
  const { world } = planner;
  const stops: { cell: number; hold: number }[] = [{ cell: world.taskPickup[task], hold: world.taskPickupTicks[task] }];
  stops.push({ cell: world.taskDrop[task], hold: world.taskDropTicks[task] });
  if (world.taskReturn[task] >= 0) stops.push({ cell: world.taskReturn[task], hold: world.taskReturnTicks[task] });
  if (!parkingAfter) return planStops(planner, robot, from, tick, stops, true);
  const lastStop = stops[stops.length - 1].cell;
  // Without a free spot the plan cannot end well: fail before searching the task's legs.
  const spotCount = parkingAfter.find(lastStop);
  if (spotCount === 0) return null;
  const plan = planStops(planner, robot, from, tick, stops, false);
  if (!plan) return null;
  const arrival = tick + plan.path.length - 1;
  for (let i = 0; i < spotCount; i++) {
    const leg = planRest(planner, robot, lastStop, arrival, parkingAfter.spots[i]);
    if (!leg) continue;
    const path = new Int32Array(plan.path.length + leg.length - 1);
    path.set(plan.path);
    path.set(leg.subarray(1), plan.path.length);
    return { path, pickupTick: plan.pickupTick };
  }
  // No parking spot to go on to: no plan. Resting on the drop instead would block it for
  // every other task (measured on the demo hall with 40 robots and 38 spots: 3377 instead
  // of 4590 deliveries in 2 h); the robot waits for a spot, the task for another robot.
  return null;
}

/** `restAtEnd`: the last stop ends in a rest; otherwise it is held for its handling only. */
function planStops(planner: Planner, robot: number, from: number, tick: number, stops: { cell: number; hold: number }[], restAtEnd: boolean): TaskPlan | null {
  const { table, search, distances } = planner;
  let estimate = 64;
  let previous = from;
  for (const stop of stops) {
    estimate += 3 * distances.distance(previous, stop.cell) + stop.hold;
    previous = stop.cell;
  }
  table.ensureHorizon(estimate);
  const pieces: Int32Array[] = [];
  let cell = from;
  let t = tick;
  let pickupTick = -1;
  for (let i = 0; i < stops.length; i++) {
    const stop = stops[i];
    const last = i === stops.length - 1;
    const leg = search.search({
      robot,
      start: cell,
      startTick: t,
      goal: stop.cell,
      heuristic: distances.to(stop.cell),
      holdTicks: stop.hold,
      restForever: last && restAtEnd,
    });
    if (!leg) return null;
    // Skip the first cell of every leg after the first: it repeats the previous leg's last cell.
    pieces.push(i === 0 ? leg : leg.subarray(1));
    t += leg.length - 1;
    if (i === 0) pickupTick = t;
    if (stop.hold > 0) pieces.push(new Int32Array(stop.hold).fill(stop.cell));
    t += stop.hold;
    cell = stop.cell;
  }
  let length = 0;
  for (const piece of pieces) length += piece.length;
  const path = new Int32Array(length);
  let offset = 0;
  for (const piece of pieces) {
    path.set(piece, offset);
    offset += piece.length;
  }
  return { path, pickupTick };
}

/** Plans a move to `goal` ending in a rest there (parking). */
export function planRest(planner: Planner, robot: number, from: number, tick: number, goal: number): Int32Array | null {
  planner.table.ensureHorizon(3 * planner.distances.distance(from, goal) + 64);
  return planner.search.search({
    robot,
    start: from,
    startTick: tick,
    goal,
    heuristic: planner.distances.to(goal),
    holdTicks: 0,
    restForever: true,
  });
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
    const d = toFrom[c];
    if (endRobot[c] >= 0 || d >= unreachable) continue;
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
