/**
 * The one interface between the engine and every dispatch-and-routing policy, planned
 * (paths reserved in space-time) or reactive (one move per tick).
 *
 * At every tick where something happened (a task released, a handling finished, robots
 * moved, or the policy asked to be woken) the engine calls `step(tick, moves)`. The policy
 * may assign tasks through `world.assign` / `world.unassign`, and writes into `moves[r]` the
 * cell robot r should occupy at tick + 1 (the engine pre-fills each entry with the robot's
 * current cell, i.e. wait). Robots that are handling stay put whatever the policy writes.
 * The return value is the next tick at which the policy needs a call even if nothing else
 * happens: tick + 1 while any robot follows a plan or waits to retry, Infinity when every
 * robot rests. The engine never trusts the moves: an independent validator checks each
 * executed tick for vertex and swap collisions.
 *
 * Operating realism (sim/upkeep.ts): the engine sends a robot whose battery ran low to a
 * charger when it is idle (phase ToCharger, goal `world.goalOf(r)`; rest there, it charges
 * in phase Charging and is idle again afterwards) or queues it (WaitingForCharger: rest like
 * an idle robot, take no task); a broken-down robot (`world.robotBroken`) stands where it
 * failed. Use `world.mayTakeTask(r)` before giving a task, `world.isFixed(r)` for robots
 * that cannot move, `world.restsLikeIdle(r)` for robots that should go and rest.
 *
 * Execution delays (`world.movesMayBeHeld`): the engine may hold back a move the policy
 * wrote; it then calls `step` again at the same tick with that robot fixed
 * (`world.isFixed(r)`, `world.robotHeldUntil`), so the policy must tolerate a second call
 * per tick and must not move another robot into a fixed robot's cell. Planned policies
 * follow their paths through sim/plan-execution.ts, which keeps the planned passing order
 * of every cell (an action dependency graph).
 *
 * Handling convention: a robot that reaches its pickup (drop, return) cell at tick t starts
 * handling at once and stays on the cell through tick t + h, h the task's handling ticks;
 * it may move again from t + h to t + h + 1. Planned policies include these waits.
 *
 * Task ids are slots that the world reuses after a task is delivered (sim/world.ts): do not
 * keep a task id past its delivery.
 */
import type { z } from 'zod';
import type { Layout } from './layout.ts';
import type { DistanceTables } from './distance-table.ts';
import type { World } from './world.ts';

export interface Policy {
  /**
   * `turns` (one entry per robot, pre-filled with -1): with forward-only robots
   * (`world.turnTicks` > 0, sim/headings.ts) write a heading (0-3: N, E, S, W) to turn a
   * standing robot in place; it stays on its cell for the quarter turns x `world.turnTicks`
   * and may move from the tick its turn ends (`world.robotTurnUntil`) to the next, forward
   * only. A move against the heading, a move before the turn ended and a turn while
   * handling, held or moving are illegal steps.
   */
  step(tick: number, moves: Int32Array, turns?: Int8Array): number;
  /**
   * Optional channel for the deadlock detector (sim/deadlock-detector.ts): one entry per
   * robot. The engine fills it with -1 before every step; for a robot that holds a task and
   * stays although it wanted to move, the policy may write the cell it wanted (its own cell:
   * it chose to stay). Entries left at -1 are inferred from the distance table of the robot's
   * goal, so a policy need not fill it.
   */
  readonly wantedCells?: Int32Array;
  /**
   * True when robot r can be stopped where it stands from `tick` on without breaking the
   * policy's plans (a breakdown). Planned policies answer true once the robot's reserved
   * path has ended (it rests on its last cell and nobody plans through it); until then the
   * engine keeps the breakdown pending (`world.robotStopPending`: give the robot no new
   * work). Omitted: always true (reactive policies see a broken robot as fixed, like a
   * handling one).
   */
  canStop?(robot: number, tick: number): boolean;
  /** The engine moved robot r off the floor to a parking cell (an operator clearing a deadlock). */
  onRelocated?(robot: number, tick: number): void;
  /** Policy-specific counters for the run summary (e.g. searches, expansions). */
  counters?(): Record<string, number>;
}

export interface PolicyContext {
  readonly world: World;
  readonly layout: Layout;
  readonly distances: DistanceTables;
  readonly tickSeconds: number;
  /** A random stream of the policy's own (purpose "policy"), for tie-breaking if it wants one. */
  readonly random: () => number;
}

export interface PolicyOptionDoc {
  name: string;
  default: string | number | boolean;
  unit: string;
  description: string;
}

export interface PolicyFactory<Options = Record<string, unknown>> {
  name: string;
  /** One line for `fleetwright policies`. */
  summary: string;
  /** The published source of the method. */
  source: string;
  /** Planned policies reserve paths, so the engine must not relocate their robots. */
  allowsRecovery: boolean;
  options: z.ZodType<Options>;
  optionDocs: PolicyOptionDoc[];
  create(context: PolicyContext, options: Options): Policy;
}
