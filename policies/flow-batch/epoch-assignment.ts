/**
 * One epoch of the flow-batch policy's dispatch: free robots x open tasks, assigned
 * optimally (minimum total cost) by rectangular linear assignment (Kuhn 1955; the
 * shortest-augmenting-path solver of Jonker & Volgenant 1987 in Crouse's 2016 rectangular
 * form, policies/shared/assignment.ts). Rectangular in both directions: with more robots
 * than tasks every task gets a robot, with more tasks than robots every robot gets a task
 * (pairs the rules below forbid excepted).
 *
 * Cost of robot r for task k, in cells:
 *   distance(cell of r, pickup of k) - ageWeight * (seconds task k has waited)
 * The distance is the true grid distance (a BFS table). The ageing term is the same for
 * every robot, so it never changes which robot serves a task; it changes which tasks are
 * served when tasks outnumber robots, and it grows without bound, so a task far from every
 * robot eventually costs less than any task released after it (by more than the largest
 * distance in the hall once it has waited maxDistance / ageWeight seconds longer) and is
 * served: no task waits forever while robots keep becoming free.
 *
 * Candidates (the columns), oldest first, at most `maxTasks`:
 *  - a task with an endpoint (pickup, drop, return) that is the end of the path of a robot
 *    that is not free is skipped: that robot rests there, and a path ending in a rest must
 *    never be crossed (token passing's rule, Ma et al. AAMAS 2017);
 *  - tasks of one batch must not block each other: a task is skipped when its end cell
 *    (drop, or return for a round trip) is an endpoint of an older candidate, or one of its
 *    endpoints is the end cell of an older candidate. The younger task waits one epoch.
 * Pairs forbidden by cost FORBIDDEN_COST: the pickup is unreachable from the robot, or an
 * endpoint of the task is where another free robot currently rests. The solver then
 * maximises the number of allowed pairs first and minimises their cost second; forbidden
 * pairs are dropped from the result.
 *
 * Complexity: O(free x candidates) to build the matrix plus the solver's
 * O(min^2 * max) worst case, min and max the smaller and larger side.
 */
import type { DistanceTables } from '../../sim/distance-table.ts';
import { unreachable } from '../../sim/distance-table.ts';
import type { World } from '../../sim/world.ts';
import { FORBIDDEN_COST, solveAssignment } from '../shared/assignment.ts';

export interface EpochAssignmentRequest {
  world: World;
  distances: DistanceTables;
  /** Robot resting at each cell from some tick on, or -1 (ReservationTable.endRobot). */
  endRobot: Int32Array;
  /** Robots to dispatch: idle, holding no task. */
  freeRobots: readonly number[];
  tick: number;
  tickSeconds: number;
  /** Cells of cost subtracted per second a task has waited since release. */
  ageWeight: number;
  /** At most this many open tasks (oldest first) enter the matrix. */
  maxTasks: number;
}

export interface EpochPair {
  robot: number;
  task: number;
  /** Grid distance from the robot to the task's pickup, cells. */
  distance: number;
  /** Assignment cost: distance minus the ageing credit, cells. */
  cost: number;
}

export interface EpochAssignment {
  /** Assigned pairs in planning priority order: lowest cost first, then lowest robot index. */
  pairs: EpochPair[];
  /** Number of candidate tasks (matrix columns). */
  candidates: number;
}

/**
 * Reusable scratch memory for assignEpoch on one floor: per-cell stamps for the candidate
 * rules and a per-robot free mark, sized once (a deliberate allocation shortcut; an epoch
 * runs every few seconds of simulated time).
 */
export class EpochAssigner {
  private readonly endStamp: Int32Array;
  private readonly endpointStamp: Int32Array;
  private readonly isFree: Uint8Array;
  private stamp = 0;

  constructor(cellCount: number, robotCount: number) {
    this.endStamp = new Int32Array(cellCount);
    this.endpointStamp = new Int32Array(cellCount);
    this.isFree = new Uint8Array(robotCount);
  }

  assign(request: EpochAssignmentRequest): EpochAssignment {
    const { world, distances, endRobot, freeRobots, tick, tickSeconds, ageWeight, maxTasks } = request;
    const rows = freeRobots.length;
    if (rows === 0 || world.openTasks.length === 0) return { pairs: [], candidates: 0 };
    const { endStamp, endpointStamp, isFree } = this;
    const stamp = ++this.stamp;
    isFree.fill(0);
    for (const r of freeRobots) isFree[r] = 1;

    // Candidate tasks, oldest first (the open list is in release order).
    const candidates: number[] = [];
    const endpoints = [0, 0, 0];
    for (const task of world.openTasks) {
      if (candidates.length >= maxTasks) break;
      const count = taskEndpoints(world, task, endpoints);
      const end = endpoints[count - 1];
      let usable = endpointStamp[end] !== stamp;
      for (let e = 0; e < count && usable; e++) {
        const c = endpoints[e];
        const rester = endRobot[c];
        if (rester >= 0 && !isFree[rester]) usable = false;
        else if (endStamp[c] === stamp) usable = false;
      }
      if (!usable) continue;
      candidates.push(task);
      endStamp[end] = stamp;
      for (let e = 0; e < count; e++) endpointStamp[endpoints[e]] = stamp;
    }
    const cols = candidates.length;
    if (cols === 0) return { pairs: [], candidates: 0 };

    const cost = new Float64Array(rows * cols);
    const distance = new Float64Array(rows * cols);
    for (let j = 0; j < cols; j++) {
      const task = candidates[j];
      const toPickup = distances.to(world.taskPickup[task]);
      const credit = ageWeight * (tick - world.taskRelease[task]) * tickSeconds;
      // A free robot resting on an endpoint blocks the task for every robot but itself;
      // two different resting robots block it for everyone (-2).
      const count = taskEndpoints(world, task, endpoints);
      let blocker = -1;
      for (let e = 0; e < count; e++) {
        const rester = endRobot[endpoints[e]];
        if (rester < 0 || rester === blocker) continue;
        blocker = blocker === -1 ? rester : -2;
      }
      for (let i = 0; i < rows; i++) {
        const robot = freeRobots[i];
        const d = toPickup[world.robotCell[robot]];
        const k = i * cols + j;
        distance[k] = d;
        cost[k] = d >= unreachable || (blocker !== -1 && blocker !== robot) ? FORBIDDEN_COST : d - credit;
      }
    }

    const { rowToCol } = solveAssignment(cost, rows, cols);
    const pairs: EpochPair[] = [];
    for (let i = 0; i < rows; i++) {
      const j = rowToCol[i];
      if (j < 0) continue;
      const k = i * cols + j;
      if (cost[k] >= FORBIDDEN_COST / 2) continue;
      pairs.push({ robot: freeRobots[i], task: candidates[j], distance: distance[k], cost: cost[k] });
    }
    pairs.sort((a, b) => a.cost - b.cost || a.robot - b.robot);
    return { pairs, candidates: cols };
  }
}

/** Writes the task's endpoints (pickup, drop[, return]) into `out`; returns how many. The last one is where the path ends. */
export function taskEndpoints(world: World, task: number, out: number[]): number {
  out[0] = world.taskPickup[task];
  out[1] = world.taskDrop[task];
  const back = world.taskReturn[task];
  if (back < 0) return 2;
  out[2] = back;
  return 3;
}
