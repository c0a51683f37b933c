/**
 * Greedy reactive control, the common practice many sites run: no joint planning, no
 * reservations, one move per robot per tick.
 *
 *  - Dispatch: each idle robot, in robot order, takes the open task whose pickup is nearest
 *    by grid distance; ties go to the earlier release (the open list's order).
 *  - Routing: a robot follows the breadth-first distance table of its current goal,
 *    individually shortest and blind to other robots: among the neighbours one step
 *    closer, it takes the first free one in N, E, S, W order, and waits when none is free.
 *    A neighbour is free when no robot claimed it for the next tick and it is empty, or its
 *    robot has settled on moving elsewhere this tick (following into a cell vacated in the
 *    same tick is allowed by the model, so a queue of robots moves as one); never towards
 *    the robot it leaves (that would be a swap). Robots that wait on an undecided robot are
 *    settled in a second pass, repeated until nothing changes.
 *  - Rest: a robot without a task heads for the nearest parking spot (`H`) that no resting
 *    robot holds and no other robot is heading for (ties in reading order), and stays.
 *  - Forward-only robots (`world.turnTicks` > 0): the cell ahead is looked at first; a
 *    chosen move that is not to the cell ahead becomes a turn in place towards it, and
 *    robots that were to follow into its cell wait (policies/shared/turn-in-place.ts): the
 *    turn is paid as waiting.
 *  - Robots that cannot move (handling, turning, held back by an execution delay) stand
 *    still; nobody waits to follow them.
 *
 * It can deadlock: two robots head-on in a one-lane aisle wait for each other forever,
 * because the way around (a side pocket) is never on an individually shortest path. That
 * is its purpose: the engine detects the stall and, since this policy allows recovery,
 * models an operator clearing the robots to parking, so the cost of deadlocks shows up in
 * throughput and robot-hours lost.
 *
 * Cost per step: O(robots) for motion, plus O(idle robots x open tasks) for dispatch when
 * the open list or a robot's task changed (skipped otherwise, via world.version).
 */
import { z } from 'zod';
import { CellKind } from '../../sim/layout.ts';
import type { Policy, PolicyContext, PolicyOptionDoc } from '../../sim/policy.ts';
import { unreachable } from '../../sim/distance-table.ts';
import { Phase } from '../../sim/world.ts';
import { TurnInPlace } from '../shared/turn-in-place.ts';

export const greedyReactiveOptions = z.object({}).strict();
export type GreedyReactiveOptions = z.infer<typeof greedyReactiveOptions>;
export const greedyReactiveOptionDocs: PolicyOptionDoc[] = [];

export class GreedyReactive implements Policy {
  /** Parking cell each idle robot is heading for, or -1. */
  private readonly parkingTarget: Int32Array;
  /** Robot heading for each parking cell, or -1 (the inverse of parkingTarget). */
  private readonly parkingTakenBy: Int32Array;
  /** claimedFor[c] === the current call's stamp: a robot processed earlier in this call moves into c at the next tick. */
  private readonly claimedFor: Int32Array;
  /** One stamp per call of step: the engine calls again at the same tick when it holds a move back, and the first call's claims must not count then. */
  private call = 0;
  private readonly turning: TurnInPlace;
  /** The closer cell each robot waits to follow into this tick, or -1. */
  private readonly waitingOn: Int32Array;
  private readonly decidedAt: Int32Array;
  /** world.version after the last dispatch pass; -1 forces the next pass. */
  private dispatchedVersion = -1;
  private blockedSteps = 0;
  private dispatches = 0;

  constructor(private readonly context: PolicyContext) {
    const { world, layout } = context;
    this.parkingTarget = new Int32Array(world.robotCount).fill(-1);
    this.parkingTakenBy = new Int32Array(layout.cellCount).fill(-1);
    this.claimedFor = new Int32Array(layout.cellCount).fill(-1);
    this.waitingOn = new Int32Array(world.robotCount).fill(-1);
    this.decidedAt = new Int32Array(world.robotCount).fill(-1);
    this.turning = new TurnInPlace(world, layout);
  }

  step(tick: number, moves: Int32Array, turns?: Int8Array): number {
    const { world, layout, distances } = this.context;
    const robots = world.robotCount;
    if (world.version !== this.dispatchedVersion) this.dispatch();

    let active = false;
    const call = ++this.call;
    const forwardOnly = world.turnTicks > 0 && turns !== undefined;
    /** Claims of this call (the next tick's cells). */
    const next = call;
    const occupant = world.occupant;
    // Pass 1, robots in index order: move into a closer neighbour that is empty, or follow a
    // robot that has already decided to move out of it; otherwise, if a closer neighbour is
    // held by a robot not yet decided, wait on that robot (pass 2 settles it).
    for (let r = 0; r < robots; r++) {
      this.decidedAt[r] = call;
      this.waitingOn[r] = -1;
      // Handling, charging, broken down, turning or held back: it stays, and holds its cell.
      if (world.isFixed(r)) continue;
      const cell = world.robotCell[r];
      let goal = world.goalOf(r);
      if (world.restsLikeIdle(r)) {
        goal = this.parkingGoal(r, cell);
      } else if (this.parkingTarget[r] >= 0) {
        this.dropParking(r);
      }
      if (goal < 0 || goal === cell) continue;
      active = true;
      const table = distances.to(goal);
      const closer = table[cell] - 1;
      if (closer + 1 >= unreachable) continue;
      const base = cell * 4;
      let chosen = -1;
      let wait = -1;
      // Forward-only robots look at the cell ahead first (no turn needed), then N, E, S, W.
      const ahead = forwardOnly ? world.robotHeading[r] : -1;
      for (let k = ahead < 0 ? 0 : -1; k < 4; k++) {
        if (k === ahead) continue;
        const d = k < 0 ? ahead : k;
        const n = layout.neighbors[base + d];
        if (n < 0 || table[n] !== closer || this.claimedFor[n] === next) continue;
        const holder = occupant[n];
        if (holder < 0 || this.leaves(holder, n, cell, r, moves, call)) {
          chosen = n;
          break;
        }
        if (wait < 0 && !this.settled(holder, call) && !world.isFixed(holder)) wait = n;
      }
      if (chosen >= 0) {
        this.claimedFor[chosen] = next;
        moves[r] = chosen;
      } else if (wait >= 0) {
        this.waitingOn[r] = wait;
      } else {
        this.blockedSteps++;
      }
    }
    // Pass 2: a robot waiting on a cell follows once the robot standing there has decided to
    // leave it (not towards the waiting robot: that would be a swap). Repeated until nothing
    // changes; each pass settles at least the front of every queue of followers.
    for (let changed = true; changed; ) {
      changed = false;
      for (let r = 0; r < robots; r++) {
        const n = this.waitingOn[r];
        if (n < 0) continue;
        if (this.claimedFor[n] === next) {
          this.waitingOn[r] = -1;
          this.blockedSteps++;
          continue;
        }
        const holder = occupant[n];
        if (holder >= 0 && !this.leaves(holder, n, world.robotCell[r], r, moves, call)) {
          if (!this.settled(holder, call)) continue; // its own move is not settled yet
          this.waitingOn[r] = -1;
          this.blockedSteps++;
          continue;
        }
        this.claimedFor[n] = next;
        moves[r] = n;
        this.waitingOn[r] = -1;
        changed = true;
      }
    }
    // Whoever still waits is in a ring of followers (or behind one): all of them stay.
    for (let r = 0; r < robots; r++) {
      if (this.waitingOn[r] >= 0) {
        this.waitingOn[r] = -1;
        this.blockedSteps++;
      }
    }
    if (world.turnTicks > 0 && turns !== undefined) this.turning.apply(moves, turns);
    return active ? tick + 1 : Infinity;
  }

  /** True when robot `holder`'s move in this call is final (decided and not waiting). */
  private settled(holder: number, call: number): boolean {
    return this.decidedAt[holder] === call && this.waitingOn[holder] < 0;
  }

  /** True when robot `holder`, standing on `cell`, has settled on a move to a cell other than `from` (robot r's cell: no swap). */
  private leaves(holder: number, cell: number, from: number, r: number, moves: Int32Array, call: number): boolean {
    if (holder === r || !this.settled(holder, call)) return false;
    const target = moves[holder];
    return target !== cell && target !== from;
  }

  /** Nearest open task to each idle robot, robots in index order; ties in release order. */
  private dispatch(): void {
    const { world, distances } = this.context;
    const open = world.openTasks;
    for (let r = 0; r < world.robotCount && open.length > 0; r++) {
      if (!world.mayTakeTask(r)) continue;
      const cell = world.robotCell[r];
      let best = -1;
      let bestDistance = unreachable;
      for (const task of open) {
        const d = distances.to(world.taskPickup[task])[cell];
        if (d < bestDistance) {
          bestDistance = d;
          best = task;
        }
      }
      if (best < 0) continue;
      this.dropParking(r);
      world.assign(r, best);
      this.dispatches++;
    }
    this.dispatchedVersion = world.version;
  }

  /**
   * Where an idle robot goes: its current cell when it stands on parking, else its parking
   * target (chosen now if it has none, or if a resting robot took it), or -1 when every
   * parking spot is held.
   */
  private parkingGoal(robot: number, cell: number): number {
    const { world, layout, distances } = this.context;
    let target = this.parkingTarget[robot];
    if (target === cell) return cell;
    if (target < 0 && layout.kind[cell] === CellKind.Parking && this.parkingTakenBy[cell] < 0) return cell;
    if (target >= 0) {
      const other = world.occupant[target];
      if (other < 0 || other === robot || !this.resting(other)) return target;
      this.dropParking(robot);
    }
    const toRobot = distances.to(cell);
    let bestDistance = unreachable;
    for (const c of layout.parking) {
      if (this.parkingTakenBy[c] >= 0) continue;
      const other = world.occupant[c];
      if (other >= 0 && this.resting(other)) continue;
      if (toRobot[c] < bestDistance) {
        bestDistance = toRobot[c];
        target = c;
      }
    }
    if (bestDistance >= unreachable) return -1;
    this.parkingTarget[robot] = target;
    this.parkingTakenBy[target] = robot;
    return target;
  }

  /** A robot with nothing to do that keeps its spot (idle or queued for a charger, broken down or not). */
  private resting(robot: number): boolean {
    const phase = this.context.world.robotPhase[robot];
    return phase === Phase.Idle || phase === Phase.WaitingForCharger;
  }

  private dropParking(robot: number): void {
    const target = this.parkingTarget[robot];
    if (target < 0) return;
    this.parkingTakenBy[target] = -1;
    this.parkingTarget[robot] = -1;
  }

  onRelocated(robot: number): void {
    // Nothing is planned beyond the next step; forget any parking target and dispatch anew.
    this.dropParking(robot);
    this.dispatchedVersion = -1;
  }

  counters(): Record<string, number> {
    return {
      blockedSteps: this.blockedSteps,
      dispatches: this.dispatches,
      ...(this.context.world.turnTicks > 0 ? { turnsInPlace: this.turning.turnsStarted, followersHeldByTurns: this.turning.followersHeld } : {}),
    };
  }
}
