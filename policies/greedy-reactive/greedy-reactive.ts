/**
 * Greedy reactive control, the common practice many sites run: no joint planning, no
 * reservations, one move per robot per tick.
 *
 *  - Dispatch: each idle robot, in robot order, takes the open task whose pickup is nearest
 *    by grid distance; ties go to the earlier release (the open list's order).
 *  - Routing: a robot follows the breadth-first distance table of its current goal,
 *    individually shortest and blind to other robots: among the neighbours one step
 *    closer, it takes the first free one in N, E, S, W order, and waits when none is free.
 *    "Free" is deliberately strict: empty at this tick and not claimed for the next tick by
 *    a robot processed earlier in this tick. Following into a cell vacated in the same tick
 *    is never done, so no vertex or swap collision can arise (the validator checks anyway).
 *  - Rest: a robot without a task heads for the nearest parking spot (`H`) that no resting
 *    robot holds and no other robot is heading for (ties in reading order), and stays.
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

export const greedyReactiveOptions = z.object({}).strict();
export type GreedyReactiveOptions = z.infer<typeof greedyReactiveOptions>;
export const greedyReactiveOptionDocs: PolicyOptionDoc[] = [];

export class GreedyReactive implements Policy {
  /** Parking cell each idle robot is heading for, or -1. */
  private readonly parkingTarget: Int32Array;
  /** Robot heading for each parking cell, or -1 (the inverse of parkingTarget). */
  private readonly parkingTakenBy: Int32Array;
  /** claimedFor[c] === t + 1: a robot processed earlier at tick t moves into c at t + 1. */
  private readonly claimedFor: Int32Array;
  /** world.version after the last dispatch pass; -1 forces the next pass. */
  private dispatchedVersion = -1;
  private blockedSteps = 0;
  private dispatches = 0;

  constructor(private readonly context: PolicyContext) {
    const { world, layout } = context;
    this.parkingTarget = new Int32Array(world.robotCount).fill(-1);
    this.parkingTakenBy = new Int32Array(layout.cellCount).fill(-1);
    this.claimedFor = new Int32Array(layout.cellCount).fill(-1);
  }

  step(tick: number, moves: Int32Array): number {
    const { world, layout, distances } = this.context;
    const robots = world.robotCount;
    if (world.version !== this.dispatchedVersion) this.dispatch();

    let active = false;
    const next = tick + 1;
    for (let r = 0; r < robots; r++) {
      const phase = world.robotPhase[r];
      const cell = world.robotCell[r];
      let goal = world.goalOf(r);
      if (phase === Phase.Idle) {
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
      for (let d = 0; d < 4; d++) {
        const n = layout.neighbors[base + d];
        if (n < 0 || table[n] !== closer) continue;
        if (world.occupant[n] >= 0 || this.claimedFor[n] === next) continue;
        chosen = n;
        break;
      }
      if (chosen < 0) {
        this.blockedSteps++;
        continue;
      }
      this.claimedFor[chosen] = next;
      moves[r] = chosen;
    }
    return active ? next : Infinity;
  }

  /** Nearest open task to each idle robot, robots in index order; ties in release order. */
  private dispatch(): void {
    const { world, distances } = this.context;
    const open = world.openTasks;
    for (let r = 0; r < world.robotCount && open.length > 0; r++) {
      if (world.robotPhase[r] !== Phase.Idle || world.robotTask[r] !== -1) continue;
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
      if (other < 0 || other === robot || world.robotPhase[other] !== Phase.Idle) return target;
      this.dropParking(robot);
    }
    const toRobot = distances.to(cell);
    let bestDistance = unreachable;
    for (const c of layout.parking) {
      if (this.parkingTakenBy[c] >= 0) continue;
      const other = world.occupant[c];
      if (other >= 0 && world.robotPhase[other] === Phase.Idle) continue;
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
    return { blockedSteps: this.blockedSteps, dispatches: this.dispatches };
  }
}
