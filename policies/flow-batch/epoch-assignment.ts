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
 * every robot, so it never changes how the chosen tasks are matched to robots; it changes
 * which tasks are chosen when tasks outnumber robots. It grows without bound: once a task
 * has waited (largest distance in the hall) / ageWeight seconds longer than another, it
 * costs less for every robot, so a task far from every robot is served after finitely many
 * younger ones (the oldest-first candidate cap keeps it in the matrix): no task waits
 * forever while robots keep becoming free.
 *
 * Candidates (the columns): the open tasks, oldest first, at most `maxTasks`, skipping a
 * task with an endpoint (pickup, drop, return) that is the end of the path of a robot that
 * is not free: that robot rests there, and a path ending in a rest must never be crossed
 * (token passing's rule, Ma et al. AAMAS 2017). Pairs forbidden by cost FORBIDDEN_COST: the
 * pickup is unreachable from the robot, or an endpoint of the task is where another free
 * robot rests. The solver then maximises the number of allowed pairs first and minimises
 * their cost second; forbidden pairs are dropped from the result.
 *
 * Two chosen tasks may end on the same cell (two parcels for one chute); the caller plans
 * the pairs in priority order and sends a robot whose task became blocked by a rest into
 * another round (see flow-batch.ts).
 *
 * Complexity: O(free x candidates) to build the matrix plus the solver's
 * O(min^2 * max) worst case, min and max the smaller and larger side.
 */
import type { DistanceTables } from '../../sim/distance-table.ts';
import { unreachable } from '../../sim/distance-table.ts';
import { Phase, type World } from '../../sim/world.ts';
import { FORBIDDEN_COST, solveAssignment } from '../shared/assignment.ts';

// Read once: imported bindings are getters under the TypeScript loader, and these are read per robot per step.
const phaseToPickup = Phase.ToPickup;

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
  /** At most this many robots assigned to one pickup and not yet there (0: no limit). */
  pickupQueueLimit: number;
}

export interface EpochPair {
  robot: number;
  task: number;
  /** Assignment cost: distance minus the ageing credit, cells. */
  cost: number;
}

export interface EpochAssignment {
  /** Assigned pairs in planning priority order: lowest cost first, then lowest robot index. */
  pairs: EpochPair[];
  /** Number of candidate tasks (matrix columns). */
  candidates: number;
}

/** Dispatches one epoch; keeps a per-robot scratch mark sized once. */
export class EpochAssigner {
  private readonly isFree: Uint8Array;
  /** Robots bound for each pickup cell (plus candidates taken this epoch), valid where `committedStamp` is current. */
  private readonly committed: Int32Array;
  private readonly committedStamp: Int32Array;
  private stamp = 0;
  private readonly endpoints = [0, 0, 0];
  /** Cost matrix storage, reused across epochs. */
  private cost = new Float64Array(256);

  /** Cells a task can be picked up from (pickup and storage points): when every one has a full queue, no later task can be a candidate. */
  private readonly pickupCells: number;

  constructor(robotCount: number, cellCount: number, pickupCells: number) {
    this.pickupCells = pickupCells;
    this.isFree = new Uint8Array(robotCount);
    this.committed = new Int32Array(cellCount);
    this.committedStamp = new Int32Array(cellCount);
  }

  assign(request: EpochAssignmentRequest): EpochAssignment {
    const { world, freeRobots } = request;
    if (freeRobots.length === 0 || world.openTasks.length === 0) return { pairs: [], candidates: 0 };
    const isFree = this.isFree;
    for (const r of freeRobots) isFree[r] = 1;
    try {
      return this.assignMarked(request);
    } finally {
      for (const r of freeRobots) isFree[r] = 0;
    }
  }

  /** assign() with `isFree` marking the free robots. */
  private assignMarked(request: EpochAssignmentRequest): EpochAssignment {
    const { world, distances, endRobot, freeRobots, tick, tickSeconds, ageWeight, maxTasks, pickupQueueLimit } = request;
    const rows = freeRobots.length;
    const isFree = this.isFree;

    // Pickup queues: robots already bound for each pickup.
    const committed = this.committed;
    const committedStamp = this.committedStamp;
    const stamp = ++this.stamp;
    let fullQueues = 0;
    if (pickupQueueLimit > 0) {
      for (let r = 0; r < world.robotCount; r++) {
        if (world.robotPhase[r] !== phaseToPickup) continue;
        const pickup = world.taskPickup[world.robotTask[r]];
        if (committedStamp[pickup] !== stamp) {
          committedStamp[pickup] = stamp;
          committed[pickup] = 0;
        }
        if (++committed[pickup] === pickupQueueLimit) fullQueues++;
      }
    }

    // Candidate tasks, oldest first (the open list is in release order).
    const candidates: number[] = [];
    const open = world.openTasks;
    const limited = pickupQueueLimit > 0;
    for (let i = 0; i < open.length; i++) {
      if (candidates.length >= maxTasks) break;
      // Performance shortcut: with every pickup's queue full, the rest of the list cannot qualify.
      if (limited && fullQueues >= this.pickupCells) break;
      const task = open[i];
      const pickup = world.taskPickup[task];
      // A full queue takes no more robots this epoch, counting the candidates that may join it.
      if (limited && committedStamp[pickup] === stamp && committed[pickup] >= pickupQueueLimit) continue;
      if (restsBusy(endRobot, isFree, pickup) || restsBusy(endRobot, isFree, world.taskDrop[task])) continue;
      const back = world.taskReturn[task];
      if (back >= 0 && restsBusy(endRobot, isFree, back)) continue;
      if (limited) {
        if (committedStamp[pickup] !== stamp) {
          committedStamp[pickup] = stamp;
          committed[pickup] = 0;
        }
        if (++committed[pickup] === pickupQueueLimit) fullQueues++;
      }
      candidates.push(task);
    }
    const cols = candidates.length;
    if (cols === 0) return { pairs: [], candidates: 0 };

    const endpoints = this.endpoints;
    if (this.cost.length < rows * cols) this.cost = new Float64Array(Math.max(rows * cols, 2 * this.cost.length));
    const cost = this.cost.subarray(0, rows * cols);
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
        cost[i * cols + j] = d >= unreachable || (blocker !== -1 && blocker !== robot) ? FORBIDDEN_COST : d - credit;
      }
    }

    const pairs: EpochPair[] = [];
    if (rows === 1 || cols === 1) {
      // One robot or one task: the optimum is the cheapest pair, the first in index order
      // among equal costs, which is also what the solver returns (it breaks ties the same way).
      let best = 0;
      for (let k = 1; k < rows * cols; k++) if (cost[k] < cost[best]) best = k;
      if (cost[best] < FORBIDDEN_COST / 2) {
        const i = cols === 1 ? best : 0;
        const j = cols === 1 ? 0 : best;
        pairs.push({ robot: freeRobots[i], task: candidates[j], cost: cost[best] });
      }
      return { pairs, candidates: cols };
    }
    const { rowToCol } = solveAssignment(cost, rows, cols);
    for (let i = 0; i < rows; i++) {
      const j = rowToCol[i];
      if (j < 0) continue;
      const k = i * cols + j;
      if (cost[k] >= FORBIDDEN_COST / 2) continue;
      pairs.push({ robot: freeRobots[i], task: candidates[j], cost: cost[k] });
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

/** True when a robot that is not free rests on `cell` (a path ending there must never be crossed). */
function restsBusy(endRobot: Int32Array, isFree: Uint8Array, cell: number): boolean {
  const rester = endRobot[cell];
  return rester >= 0 && !isFree[rester];
}
